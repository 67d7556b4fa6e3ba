import { loadEnv } from '../config/env.js';
import { migrate } from './data-source.js';

const env = loadEnv();
const ran = await migrate(env);
console.log(ran.length ? `Applied migrations: ${ran.join(', ')}` : 'Database schema is up to date.');
