/**
 * The OpenAPI 3 document of the v1 review, release, key and download API, generated from the
 * same zod schemas the endpoints parse with (@asteasolutions/zod-to-openapi), never by hand.
 */
import { extendZodWithOpenApi, OpenAPIRegistry, OpenApiGeneratorV3 } from '@asteasolutions/zod-to-openapi';
import { z } from 'zod';
import pkg from '../../../package.json';
import { ciKeyViewSchema, createCiKeySchema } from './ci-keys';
import { compareQuerySchema, comparisonSchema } from './compare';
import { bundleQuerySchema, revSpecSchema } from './downloads';
import { historyEntrySchema } from './history';
import { publishReleaseSchema, releaseViewSchema } from './releases';
import { commentSchema, commentViewSchema, requestReviewSchema, reviewPanelSchema, reviewViewSchema, verdictSchema } from './reviews';

extendZodWithOpenApi(z);

let cached: Record<string, unknown> | null = null;

/** Builds (once per process) the OpenAPI document served at /api/v1/openapi.json. */
export function buildOpenApiDocument(): Record<string, unknown> {
  if (cached) return cached;
  const registry = new OpenAPIRegistry();
  const ciKey = registry.registerComponent('securitySchemes', 'ciKey', {
    type: 'http',
    scheme: 'bearer',
    description: 'A CI key (read-only, one workspace) from the workspace Keys page: `Authorization: Bearer qk_…`.',
  });
  const session = registry.registerComponent('securitySchemes', 'session', {
    type: 'apiKey',
    in: 'cookie',
    name: 'quiesce_session',
    description: 'The session cookie of a signed-in member (sign in at /auth/sign-in).',
  });
  const readSecurity = [{ [ciKey.name]: [] }, { [session.name]: [] }];
  const writeSecurity = [{ [session.name]: [] }];

  const errorSchema = registry.register(
    'Error',
    z.object({ error: z.object({ code: z.string(), message: z.string(), field: z.string().optional() }) }),
  );
  const errorResponse = (description: string) => ({ description, content: { 'application/json': { schema: errorSchema } } });
  const notFound = errorResponse('Unknown, or not visible to the caller (never 403 for reads): workspace, controller, revision, release or key.');
  const readErrors = { 400: errorResponse('A query parameter is invalid.'), 404: notFound };
  const writeErrors = {
    400: errorResponse('The body is invalid (the field is named).'),
    401: errorResponse('Not signed in (CI keys are read-only).'),
    403: errorResponse('The role does not allow this.'),
    404: notFound,
    409: errorResponse('The request clashes with the current state (superseded, not approved, error findings, label taken, …).'),
    415: errorResponse('The body is not JSON.'),
  };

  const workspaceParams = z.object({ workspace: z.string().openapi({ description: 'Workspace short name', example: 'halvorsen' }) });
  const controllerParams = workspaceParams.extend({ controller: z.string().openapi({ description: 'Controller short name', example: 'door-interlock' }) });
  const revisionParams = controllerParams.extend({ rev: z.string().regex(/^[1-9][0-9]{0,6}$/).openapi({ description: 'Revision number', example: '3' }) });
  const bundleParams = controllerParams.extend({
    rev: revSpecSchema.openapi({ description: 'A revision number, `latest`, `latest-release` (what CI usually fetches) or `release:{label}`.', example: 'latest-release' }),
  });

  const bundleHeaders = {
    ETag: { description: 'The quoted sha256 of the zip.', schema: { type: 'string' as const } },
    'X-Quiesce-Revision': { description: 'The revision number the {rev} resolved to.', schema: { type: 'integer' as const } },
    'X-Quiesce-Release': { description: 'The release label, when {rev} named a release.', schema: { type: 'string' as const } },
    'X-Quiesce-Generator': { description: 'The generator version that made the bundle.', schema: { type: 'string' as const } },
  };
  const base = '/api/v1/workspaces/{workspace}/controllers/{controller}';

  registry.registerPath({
    method: 'get',
    path: `${base}/revisions/{rev}/bundle`,
    summary: 'Download the generated code of a revision as a zip',
    description:
      'The stored, byte-identical zip for one target. The first request for a revision generates it; later requests serve the stored bytes. Send If-None-Match with the ETag to get 304.',
    security: readSecurity,
    request: { params: bundleParams, query: bundleQuerySchema, headers: z.object({ 'If-None-Match': z.string().optional() }) },
    responses: {
      200: {
        description: 'The zip (Content-Disposition names the file, e.g. door-interlock-r3-c.zip).',
        headers: { ...bundleHeaders, 'Content-Disposition': { description: 'attachment; filename="…zip"', schema: { type: 'string' } } },
        content: { 'application/zip': { schema: z.string().openapi({ format: 'binary' }) } },
      },
      304: { description: 'Not modified: the If-None-Match ETag is the current bundle.', headers: bundleHeaders },
      ...readErrors,
    },
  });
  registry.registerPath({
    method: 'get',
    path: `${base}/revisions/{rev}/bundle.sha256`,
    summary: 'The checksum of the bundle, in sha256sum format',
    security: readSecurity,
    request: { params: bundleParams, query: bundleQuerySchema },
    responses: {
      200: {
        description: '`<sha256>  <filename>` and a newline, as `sha256sum` prints it (so `sha256sum -c` checks the download).',
        headers: bundleHeaders,
        content: { 'text/plain': { schema: z.string().openapi({ example: '3f7a…c2  door-interlock-r3-c.zip\n' }) } },
      },
      304: { description: 'Not modified.', headers: bundleHeaders },
      ...readErrors,
    },
  });
  registry.registerPath({
    method: 'get',
    path: `${base}/revisions`,
    summary: 'The history of a controller',
    security: readSecurity,
    request: { params: controllerParams },
    responses: {
      200: {
        description: 'Every revision, newest first.',
        content: {
          'application/json': {
            schema: z.object({
              controller: z.object({ slug: z.string(), name: z.string(), head: z.number().int() }),
              revisions: z.array(registry.register('HistoryEntry', historyEntrySchema)),
            }),
          },
        },
      },
      404: notFound,
    },
  });
  registry.registerPath({
    method: 'get',
    path: `${base}/compare`,
    summary: 'Compare two revisions',
    description: 'Table, findings, source and generated-code diff of `to` (default: the newest) against `from` (default: its base). `format=unified` answers one text/plain unified diff.',
    security: readSecurity,
    request: { params: controllerParams, query: compareQuerySchema },
    responses: {
      200: {
        description: 'The comparison.',
        content: {
          'application/json': { schema: registry.register('Comparison', comparisonSchema) },
          'text/plain': { schema: z.string().openapi({ description: 'Unified diff (format=unified)' }) },
        },
      },
      ...readErrors,
    },
  });
  const panel = registry.register('ReviewPanel', reviewPanelSchema);
  registry.registerPath({
    method: 'get',
    path: `${base}/revisions/{rev}/reviews`,
    summary: 'The review panel of a revision',
    security: readSecurity,
    request: { params: revisionParams },
    responses: { 200: { description: 'State, reviews and comments.', content: { 'application/json': { schema: panel } } }, 404: notFound },
  });
  registry.registerPath({
    method: 'post',
    path: `${base}/revisions/{rev}/reviews`,
    summary: 'Ask reviewers to review the newest revision (editors, owners)',
    description: 'Each reviewer gets an e-mail with a link to the comparison. Default reviewers: every member with the reviewer role.',
    security: writeSecurity,
    request: { params: revisionParams, body: { content: { 'application/json': { schema: requestReviewSchema } } } },
    responses: {
      201: { description: 'The reviews created.', content: { 'application/json': { schema: z.object({ reviews: z.array(registry.register('Review', reviewViewSchema)) }) } } },
      ...writeErrors,
    },
  });
  registry.registerPath({
    method: 'post',
    path: `${base}/revisions/{rev}/comments`,
    summary: 'Comment on a revision or one of its cells (owners, editors, reviewers)',
    security: writeSecurity,
    request: { params: revisionParams, body: { content: { 'application/json': { schema: commentSchema } } } },
    responses: {
      201: { description: 'The comment.', content: { 'application/json': { schema: z.object({ comment: registry.register('Comment', commentViewSchema) }) } } },
      ...writeErrors,
    },
  });
  registry.registerPath({
    method: 'post',
    path: `${base}/revisions/{rev}/verdict`,
    summary: 'Approve or request changes (owners, reviewers)',
    description: 'Only the newest revision; a revision with error findings cannot be approved, nor can its own author approve it. The author and whoever asked are e-mailed.',
    security: writeSecurity,
    request: { params: revisionParams, body: { content: { 'application/json': { schema: verdictSchema } } } },
    responses: { 200: { description: 'The updated review panel.', content: { 'application/json': { schema: panel } } }, ...writeErrors },
  });
  const release = registry.register('Release', releaseViewSchema);
  registry.registerPath({
    method: 'get',
    path: `${base}/releases`,
    summary: 'The releases of a controller, newest first',
    security: readSecurity,
    request: { params: controllerParams },
    responses: { 200: { description: 'Releases.', content: { 'application/json': { schema: z.object({ releases: z.array(release) }) } } }, 404: notFound },
  });
  registry.registerPath({
    method: 'post',
    path: `${base}/releases`,
    summary: 'Publish an approved revision as a release (owners, reviewers)',
    description: 'Labels are unique per controller and immutable; semantic versions are suggested (other labels are accepted with a warning).',
    security: writeSecurity,
    request: { params: controllerParams, body: { content: { 'application/json': { schema: publishReleaseSchema } } } },
    responses: {
      201: { description: 'The release and any label hints.', content: { 'application/json': { schema: z.object({ release, warnings: z.array(z.string()) }) } } },
      ...writeErrors,
    },
  });
  const key = registry.register('CiKey', ciKeyViewSchema);
  registry.registerPath({
    method: 'get',
    path: '/api/v1/workspaces/{workspace}/keys',
    summary: 'List CI keys (owners)',
    security: writeSecurity,
    request: { params: workspaceParams },
    responses: { 200: { description: 'Keys, without secrets.', content: { 'application/json': { schema: z.object({ keys: z.array(key) }) } } }, ...writeErrors },
  });
  registry.registerPath({
    method: 'post',
    path: '/api/v1/workspaces/{workspace}/keys',
    summary: 'Create a CI key (owners)',
    description: 'The secret is in this answer only; it is stored as a SHA-256.',
    security: writeSecurity,
    request: { params: workspaceParams, body: { content: { 'application/json': { schema: createCiKeySchema } } } },
    responses: {
      201: { description: 'The key and its secret.', content: { 'application/json': { schema: z.object({ key, secret: z.string().openapi({ example: 'qk_…' }) }) } } },
      ...writeErrors,
    },
  });
  registry.registerPath({
    method: 'delete',
    path: '/api/v1/workspaces/{workspace}/keys/{key}',
    summary: 'Revoke a CI key at once (owners)',
    security: writeSecurity,
    request: { params: workspaceParams.extend({ key: z.string().openapi({ description: 'Key id' }) }) },
    responses: { 204: { description: 'Revoked.' }, ...writeErrors },
  });

  cached = new OpenApiGeneratorV3(registry.definitions).generateDocument({
    openapi: '3.0.3',
    info: {
      title: 'Quiesce API',
      version: pkg.version,
      description:
        'Reviews, releases, CI keys and stable bundle downloads. Reads take a CI key (Authorization: Bearer) or a session cookie and answer 404 for anything the caller may not see; writes take a session.',
    },
  }) as unknown as Record<string, unknown>;
  return cached;
}
