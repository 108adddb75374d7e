import { defineMiddleware } from 'astro:middleware';
import { readConfig } from './lib/server/config';

export const onRequest = defineMiddleware(async (context, next) => {
  const config = readConfig();
  context.locals.user = null;
  context.locals.session = null;
  context.locals.demo = config.demo;
  context.locals.outbox = config.captureMail;
  return next();
});
