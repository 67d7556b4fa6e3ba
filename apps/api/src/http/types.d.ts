import type { Actor } from '../modules/policy/policy.js';

declare global {
  namespace Express {
    interface Request {
      actor?: Actor;
      requestId: string;
    }
  }
}
