/**
 * Free text typed by people: the one rule about control characters. PostgreSQL refuses NUL
 * (U+0000) in text, and other control characters hide text on screen, break exports and
 * letters, or forge log lines. Every schema that takes free text uses {@link noControlChars}.
 */
import type { z } from 'zod';

/** C0 controls except tab, line feed and carriage return, DEL and the C1 controls. */
const CONTROL_IN_LINES = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F-\u009F]/;
/** The same plus tab, line feed and carriage return: for one-line fields. */
const CONTROL_IN_ONE_LINE = /[\u0000-\u001F\u007F-\u009F]/;

/** U+XXXX of a character, as people and editors write it. */
function codePoint(ch: string): string {
  return `U+${ch.charCodeAt(0).toString(16).toUpperCase().padStart(4, '0')}`;
}

/** The first control character in `text` and its 1-based position, or null. */
export function findControlChar(text: string, opts: { lines?: boolean } = {}): { char: string; codePoint: string; position: number } | null {
  const m = (opts.lines ? CONTROL_IN_LINES : CONTROL_IN_ONE_LINE).exec(text);
  return m ? { char: m[0], codePoint: codePoint(m[0]), position: m.index + 1 } : null;
}

/** The message for a control character found in a field; the field's path comes from zod. */
export function controlCharMessage(found: { codePoint: string; position: number }, opts: { lines?: boolean } = {}): string {
  const allowed = opts.lines ? ' (tabs and line breaks are fine)' : '';
  return `contains a control character (${found.codePoint}, character ${found.position}) that cannot be stored; remove it${allowed} and send again`;
}

/**
 * A zod check refusing control characters: `z.string().trim().max(120).check(noControlChars())`.
 * `lines: true` allows tab, line feed and carriage return (notes, summaries); otherwise the
 * text must be one line.
 */
export function noControlChars(opts: { lines?: boolean } = {}): z.core.CheckFn<string> {
  return (ctx) => {
    const found = findControlChar(ctx.value, opts);
    if (found) ctx.issues.push({ code: 'custom', input: ctx.value, message: controlCharMessage(found, opts) });
  };
}
