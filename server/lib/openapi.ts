/** The OpenAPI 3.1 document, generated from the route declarations (server/lib/http.ts). */
import { OpenAPIRegistry, OpenApiGeneratorV31 } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import { routeRegistry } from './http';

const errorSchema = z.object({
  error: z.object({ code: z.string(), message: z.string(), details: z.unknown().optional() }),
});

export function toOpenApiPath(p: string): string {
  return p.replace(/:([A-Za-z0-9_]+)/g, '{$1}');
}

export function buildOpenApi(): object {
  const registry = new OpenAPIRegistry();
  const Err = registry.register('Error', errorSchema);
  for (const def of routeRegistry) {
    const roles =
      def.access === 'public'
        ? 'public'
        : def.access === 'authenticated'
          ? 'any signed-in user'
          : 'machine' in def.access
            ? `machine account (Authorization: Bearer token) with the scope ${def.access.machine}`
            : def.access.roles.join(', ');
    const request: Record<string, unknown> = {};
    if (def.params) request.params = def.params;
    if (def.query) request.query = def.query;
    if (def.body) request.body = { content: { 'application/json': { schema: def.body } } };
    if (def.upload) {
      request.body = {
        content: {
          'multipart/form-data': {
            schema: z.object(
              Object.fromEntries(
                Object.entries(def.uploadFields ?? { files: 'file(s)' }).map(([k, v]) => [k, z.string().describe(v)]),
              ),
            ),
          },
        },
      };
    }
    registry.registerPath({
      method: def.method,
      path: toOpenApiPath(def.path),
      summary: def.summary,
      description: `${def.description ? def.description + '\n\n' : ''}Roles: ${roles}.`,
      tags: [def.tag],
      request: request as never,
      responses: {
        [def.status ?? 200]: {
          description: 'Success',
          ...(def.produces ? { content: { [def.produces]: { schema: z.string() } } } : {}),
        },
        400: { description: 'Invalid input', content: { 'application/json': { schema: Err } } },
        401: { description: 'Not signed in', content: { 'application/json': { schema: Err } } },
        403: { description: 'Role not allowed', content: { 'application/json': { schema: Err } } },
      },
      ...({
        'x-roles':
          def.access === 'public' || def.access === 'authenticated'
            ? [def.access]
            : 'machine' in def.access
              ? [`machine:${def.access.machine}`]
              : [...def.access.roles],
      } as object),
    });
  }
  return new OpenApiGeneratorV31(registry.definitions).generateDocument({
    openapi: '3.1.0',
    info: {
      title: 'Drumline API',
      version: '1.0.0',
      description:
        'REST API of Drumline. JSON in and out; errors as { "error": { "code", "message", "details" } }. ' +
        'Sign in with POST /api/auth/sign-in; the session travels in an httpOnly cookie. Machine accounts (ERP, LIMS) ' +
        'send their API token as "Authorization: Bearer dl_..." and reach only the routes of their scopes; webhooks ' +
        'are signed after the Standard Webhooks scheme (HMAC-SHA256 over id.timestamp.body, headers webhook-id, ' +
        'webhook-timestamp, webhook-signature).',
    },
  });
}
