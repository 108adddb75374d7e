import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { ApiError, jsonError, toApiError } from '../../../src/lib/server/errors';
import { parseForm, readJson, safeNext } from '../../../src/lib/server/http';
import { catchRejection } from './support/errors';

function post(body: string, type = 'application/json', headers: Record<string, string> = {}) {
  return new Request('http://127.0.0.1/api/x', { method: 'POST', headers: { 'Content-Type': type, ...headers }, body });
}
const schema = z.object({ name: z.string().min(2), count: z.number().int().optional() });

describe('readJson', () => {
  it('parses a valid body', async () => {
    await expect(readJson(post('{"name":"ok","count":2}'), schema)).resolves.toEqual({ name: 'ok', count: 2 });
  });
  it('answers malformed JSON with 400 malformed_json', async () => {
    const e = await catchRejection(readJson(post('{"name":'), schema));
    expect([e.status, e.code]).toEqual([400, 'malformed_json']);
  });
  it('answers a schema violation with 400 naming the field path', async () => {
    const e = await catchRejection(readJson(post('{"name":"x","count":1.5}'), schema));
    expect([e.status, e.code]).toEqual([400, 'invalid']);
    expect(e.field).toBe('name');
    const nested = await catchRejection(readJson(post('{"name":"okay","count":"3"}'), schema));
    expect(nested.field).toBe('count');
  });
  it('answers another content type with 415 and a too large body with 413', async () => {
    expect((await catchRejection(readJson(post('name=x', 'application/x-www-form-urlencoded'), schema))).status).toBe(415);
    expect((await catchRejection(readJson(post(JSON.stringify({ name: 'x'.repeat(2000) })), schema, { maxBytes: 1000 }))).status).toBe(413);
    expect((await catchRejection(readJson(post('{}', 'application/json', { 'Content-Length': '99999999' }), schema, { maxBytes: 1000 }))).status).toBe(413);
  });
});

describe('error answers', () => {
  it('renders {"error":{code,message,field}} with the status', async () => {
    const res = jsonError(new ApiError(409, 'already_exists', 'Taken.', { field: 'slug' }));
    expect(res.status).toBe(409);
    expect(res.headers.get('content-type')).toContain('application/json');
    expect(await res.json()).toEqual({ error: { code: 'already_exists', message: 'Taken.', field: 'slug' } });
  });
  it('hides unexpected errors behind a generic 500 without a stack', async () => {
    const original = console.error;
    console.error = () => undefined;
    try {
      const res = jsonError(new TypeError('secret internals at /srv/app.js:12'));
      expect(res.status).toBe(500);
      const text = await res.text();
      expect(text).not.toContain('secret');
      expect(text).not.toContain('app.js');
      expect(JSON.parse(text).error.code).toBe('internal');
    } finally {
      console.error = original;
    }
  });
  it('maps PostgreSQL error codes found in the cause chain', () => {
    const wrap = (code: string, constraint?: string) => Object.assign(new Error('query failed'), { cause: Object.assign(new Error('db'), { code, constraint }) });
    expect(toApiError(wrap('23505', 'workspaces_slug_key'))).toMatchObject({ status: 409, field: 'slug' });
    expect(toApiError(wrap('23503'))).toMatchObject({ status: 400, code: 'invalid_reference' });
    expect(toApiError(wrap('22P02'))).toMatchObject({ status: 400 });
    expect(toApiError(wrap('Q0001'))).toMatchObject({ status: 409, code: 'immutable' });
  });
});

describe('forms and redirects', () => {
  it('parses form fields and reports the first problem without the path prefix', () => {
    const form = new FormData();
    form.set('name', 'x');
    const r = parseForm(form, z.object({ name: z.string().min(2, 'Too short.') }));
    expect(r).toEqual({ ok: false, message: 'Too short.', field: 'name' });
  });
  it('only follows same-site relative paths after sign-in', () => {
    expect(safeNext('/w/demo')).toBe('/w/demo');
    expect(safeNext('//evil.example/x')).toBe('/workspaces');
    expect(safeNext('https://evil.example')).toBe('/workspaces');
    expect(safeNext('/\\evil.example')).toBe('/workspaces');
    expect(safeNext(null)).toBe('/workspaces');
  });
});
