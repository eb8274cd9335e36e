/**
 * The web bundle's stand-in for zod's locale index (zod/v4/locales/index.js), put in its place
 * by metro.config.js. zod's namespace `z.locales` re-exports every language it ships (about 50,
 * a fifth of the app's JavaScript before gzip); Metro keeps all of them, since it does not drop
 * unused exports. Plumbline's screens speak one language and show their own messages, and zod
 * registers English itself on first use, so only `en` is offered here. Calling `z.locales.fr()`
 * in app code would fail: the server (Node) still gets the full index.
 */
export { default as en } from 'zod/v4/locales/en.js';
