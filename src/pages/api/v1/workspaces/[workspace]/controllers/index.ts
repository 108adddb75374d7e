/** GET: the workspace's controllers. POST: create one (blank, starter, or upload). */
import type { APIRoute } from 'astro';
import { z } from 'zod';
import { FORMATS, formatFromFilename } from '../../../../../../lib/engine/formats';
import { createController, CREATE_KINDS, summarizeControllers } from '../../../../../../lib/server/controllers';
import { dbOf, guardWorkspace, respond } from '../../../../../../lib/server/api-v1';
import { fail } from '../../../../../../lib/server/errors';
import { json, readJson } from '../../../../../../lib/server/http';
import { MAX_UPLOAD_BYTES } from '../../../../../../lib/server/revisions';

const createSchema = z
  .object({
    name: z.string().trim().min(1, 'give the controller a name').max(80),
    kind: z.enum(CREATE_KINDS),
    description: z.string().max(4000).optional(),
    upload: z
      .object({
        filename: z.string().min(1).max(200),
        format: z.enum(FORMATS).optional(),
        text: z.string(),
      })
      .strict()
      .optional(),
  })
  .strict();

export const GET: APIRoute = (ctx) =>
  respond(async () => {
    const member = await guardWorkspace(ctx, 'controller.read');
    const items = await summarizeControllers(dbOf(ctx), member.workspace.id, { includeArchived: ctx.url.searchParams.get('archived') === '1' });
    return json({ controllers: items, role: member.role });
  });

export const POST: APIRoute = (ctx) =>
  respond(async () => {
    const member = await guardWorkspace(ctx, 'controller.create');
    // JSON adds escaping overhead to the file text; the text itself is checked against the exact limit.
    const body = await readJson(ctx.request, createSchema, { maxBytes: MAX_UPLOAD_BYTES * 2 + 64 * 1024 });
    let upload: { text: string; format: (typeof FORMATS)[number]; filename: string } | undefined;
    if (body.kind === 'upload') {
      if (!body.upload) throw fail.badRequest('Choose a file to upload.', 'upload');
      if (Buffer.byteLength(body.upload.text, 'utf8') > MAX_UPLOAD_BYTES) throw fail.tooLarge(`The file is larger than ${MAX_UPLOAD_BYTES / 1024 / 1024} MiB.`);
      const format = body.upload.format ?? formatFromFilename(body.upload.filename);
      if (!format) throw fail.badRequest('Unknown file type: use .qfl, .json, .kiss2 (.kiss) or .csv.', 'upload.filename');
      upload = { text: body.upload.text, format, filename: body.upload.filename };
    }
    const c = await createController(dbOf(ctx), {
      workspaceId: member.workspace.id,
      name: body.name,
      kind: body.kind,
      author: member.userId,
      ...(upload ? { upload } : {}),
      ...(body.description !== undefined ? { description: body.description } : {}),
    });
    return json({ controller: { id: c.id, slug: c.slug, name: c.name, head: c.headRevision }, url: `/w/${member.workspace.slug}/c/${c.slug}` }, 201);
  });
