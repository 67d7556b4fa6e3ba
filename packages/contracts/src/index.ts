export * from './common.js';
export * from './auth.js';
export * from './studies.js';
export * from './audit.js';
