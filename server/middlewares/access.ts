import { Router, type NextFunction, type Request, type RequestHandler, type Response } from 'express';
import { KeelsonApiError } from '../../shared/errors';
import type { Role } from '../../shared/roles';
import type { User } from '../../shared/auth';

/**
 * Who may call a route. There is no default: every route registered through `ApiRouter`
 * must say `'public'`, `'signed-in'` (any active role) or the list of roles allowed.
 */
export type Access = 'public' | 'signed-in' | readonly Role[];

export interface RouteSpec {
  readonly method: 'get' | 'post' | 'put' | 'patch' | 'delete';
  readonly path: string;
  readonly access: Access;
}

declare module 'express-serve-static-core' {
  interface Request {
    /** The signed-in user; set by passport's deserializer. */
    user?: User;
  }
}

export function currentUser(req: Request): User {
  if (!req.user) throw new KeelsonApiError('unauthenticated', 'Sign in first');
  return req.user;
}

export function requireAccess(access: Access): RequestHandler {
  return (req: Request, _res: Response, next: NextFunction) => {
    if (access === 'public') return next();
    const user = req.user;
    if (!user) return next(new KeelsonApiError('unauthenticated', 'Sign in first'));
    if (access === 'signed-in' || access.includes(user.role)) return next();
    return next(
      new KeelsonApiError('forbidden', `This action is for ${access.join(' or ')} users; you are signed in as ${user.role}`),
    );
  };
}

type Handler = (req: Request, res: Response, next: NextFunction) => unknown;

/**
 * An express Router whose routes must each declare their access. The table of routes is kept
 * so that a test can walk every route × role.
 */
export class ApiRouter {
  readonly router = Router();
  readonly routes: RouteSpec[] = [];

  constructor(private readonly prefix = '') {}

  private add(method: RouteSpec['method'], path: string, access: Access, handlers: Handler[]): this {
    if (access === undefined) throw new Error(`Route ${method} ${path} declares no access`);
    this.routes.push({ method, path: this.prefix + path, access });
    this.router[method](path, requireAccess(access), ...(handlers as RequestHandler[]));
    return this;
  }
  get(path: string, access: Access, ...h: Handler[]) { return this.add('get', path, access, h); }
  post(path: string, access: Access, ...h: Handler[]) { return this.add('post', path, access, h); }
  put(path: string, access: Access, ...h: Handler[]) { return this.add('put', path, access, h); }
  patch(path: string, access: Access, ...h: Handler[]) { return this.add('patch', path, access, h); }
  delete(path: string, access: Access, ...h: Handler[]) { return this.add('delete', path, access, h); }
}
