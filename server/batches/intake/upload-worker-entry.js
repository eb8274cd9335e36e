// Entry of the upload-reading worker thread (./upload-worker.ts starts it). A worker thread
// is a fresh Node.js instance: it has neither the server's `--import tsx` nor jest's
// transform, so it registers tsx's require hook before loading the TypeScript.
require('tsx/cjs');
require('./upload-worker-thread.ts');
