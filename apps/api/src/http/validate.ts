import type { Request } from 'express';
import type { ZodError, ZodType, z } from 'zod';
import { AppError } from './app-error.js';

export function zodIssues(err: ZodError) {
  return err.issues.map((i) => ({ path: i.path.map(String), message: i.message, code: i.code }));
}

function parse<S extends ZodType>(schema: S, value: unknown, where: string): z.infer<S> {
  const result = schema.safeParse(value);
  if (!result.success) {
    throw new AppError('validation_failed', `The ${where} has fields that are not valid`, {
      issues: zodIssues(result.error),
    });
  }
  return result.data;
}

export const body = <S extends ZodType>(req: Request, schema: S): z.infer<S> => parse(schema, req.body, 'request body');
export const query = <S extends ZodType>(req: Request, schema: S): z.infer<S> => parse(schema, req.query, 'query');
export const params = <S extends ZodType>(req: Request, schema: S): z.infer<S> => parse(schema, req.params, 'path');
