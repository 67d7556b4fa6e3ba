import { z, type ZodType } from 'zod';

/**
 * The OpenAPI document is generated from the same zod schemas that validate requests.
 * Each route module registers its operations here; `GET /api/openapi.json` serves the result.
 */
export type OperationSpec = {
  method: 'get' | 'post' | 'put' | 'patch' | 'delete';
  path: string;
  summary: string;
  tag: string;
  body?: ZodType;
  multipart?: boolean;
  query?: ZodType;
  response?: ZodType;
  status?: number;
  roles?: string;
};

const operations: OperationSpec[] = [];

export function registerOperations(...specs: OperationSpec[]): void {
  for (const s of specs) {
    if (!operations.some((o) => o.method === s.method && o.path === s.path)) operations.push(s);
  }
}

const jsonSchema = (schema: ZodType, io: 'input' | 'output') =>
  z.toJSONSchema(schema, { io, unrepresentable: 'any', target: 'openapi-3.0' });

export function buildOpenApiDocument(version: string) {
  const paths: Record<string, Record<string, unknown>> = {};
  for (const op of operations) {
    const openPath = op.path.replace(/:(\w+)/g, '{$1}');
    const pathParams = [...op.path.matchAll(/:(\w+)/g)].map((m) => ({
      name: m[1],
      in: 'path',
      required: true,
      schema: { type: 'string' },
    }));
    const queryParams = op.query
      ? Object.entries((jsonSchema(op.query, 'input') as { properties?: Record<string, unknown> }).properties ?? {}).map(
          ([name, schema]) => ({ name, in: 'query', required: false, schema }),
        )
      : [];
    const status = String(op.status ?? 200);
    paths[openPath] ??= {};
    paths[openPath][op.method] = {
      summary: op.summary,
      tags: [op.tag],
      ...(op.roles ? { description: `Roles: ${op.roles}` } : {}),
      parameters: [...pathParams, ...queryParams],
      ...(op.body
        ? { requestBody: { required: true, content: { 'application/json': { schema: jsonSchema(op.body, 'input') } } } }
        : {}),
      ...(op.multipart
        ? {
            requestBody: {
              required: true,
              content: { 'multipart/form-data': { schema: { type: 'object', properties: { file: { type: 'string', format: 'binary' } } } } },
            },
          }
        : {}),
      responses: {
        [status]: {
          description: 'Success',
          ...(op.response ? { content: { 'application/json': { schema: jsonSchema(op.response, 'output') } } } : {}),
        },
        default: { description: 'Error', content: { 'application/json': { schema: { $ref: '#/components/schemas/Error' } } } },
      },
    };
  }
  return {
    openapi: '3.0.3',
    info: { title: 'Counterpoise API', version },
    servers: [{ url: '/' }],
    components: {
      securitySchemes: { session: { type: 'apiKey', in: 'cookie', name: 'cp_session' } },
      schemas: {
        Error: {
          type: 'object',
          required: ['error'],
          properties: {
            error: {
              type: 'object',
              required: ['code', 'message'],
              properties: { code: { type: 'string' }, message: { type: 'string' }, details: {} },
            },
          },
        },
      },
    },
    security: [{ session: [] }],
    paths,
  };
}
