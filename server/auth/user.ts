import type {} from 'passport';
import type { User as ApiUser } from '../../shared/schemas';

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    // what passport puts on req.user: the API's User shape
    interface User extends ApiUser {}
  }
}

export {};
