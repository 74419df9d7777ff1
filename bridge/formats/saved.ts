/**
 * How every saved format is checked when it is read back: against its one
 * zod schema (kept beside the code that writes it), and, when it does not
 * fit, one problem in the same words everywhere — the field, what was there,
 * what was expected. Each reader puts the file in front and how to fix it
 * behind. What a field expects is written once, on the schema
 * (`.describe('a whole number of at least 1')`); a field without a
 * description is told in zod's words.
 *
 * @example
 *   const p = savedProblem(schema, { window: -1 });   // → { field: 'window', got: '-1', expected: 'a positive number of beats' }
 *   const value = readSaved(schema, json, (p) => new UsageError(`b.json: field ${p.field}: got ${p.got}; expected ${p.expected}; …`));
 */
import type { z } from 'zod';

/** Where a saved value fails its schema, in words. */
export interface SavedProblem {
  /** Dotted path of the field (`settings.window`, `files.3.size`), or `(top level)`. */
  field: string;
  /** What was there, as JSON; `nothing` when it was missing. */
  got: string;
  /** What the schema allows there. */
  expected: string;
  /** True when the field is one the format does not have (a strict schema). */
  unknown: boolean;
}

/** Longest quotation of what was there: a damaged list can be long. */
const SHOWN_CHARS = 80;
const shown = (v: unknown): string => {
  const text = v === undefined ? 'nothing' : JSON.stringify(v);
  return text.length > SHOWN_CHARS ? `${text.slice(0, SHOWN_CHARS)}…` : text;
};

/** The value at a path, or undefined when the path leads nowhere. */
function valueAt(value: unknown, path: readonly PropertyKey[]): unknown {
  let v = value;
  for (const key of path) v = v !== null && typeof v === 'object' ? (v as Record<PropertyKey, unknown>)[key] : undefined;
  return v;
}

/** The schema inside an optional, nullable or defaulted one, or null for any other. */
const inner = (node: z.ZodType): z.ZodType | null =>
  typeof (node as { unwrap?: unknown }).unwrap === 'function' && !('shape' in node) && !('element' in node) ? (node as unknown as { unwrap(): z.ZodType }).unwrap() : null;

/** What the schema says a path expects: the description nearest the field, through objects, arrays and wrappers. */
function expectedAt(schema: z.ZodType, path: readonly PropertyKey[]): string | undefined {
  let node: z.ZodType | null | undefined = schema;
  for (const key of path) {
    while (node && inner(node)) node = inner(node);
    if (!node) return undefined;
    if ('shape' in node) node = (node.shape as Record<PropertyKey, z.ZodType>)[key];
    else if ('element' in node) node = node.element as z.ZodType;
    else return undefined;
  }
  for (; node; node = inner(node)) if (node.description) return node.description;
  return undefined;
}

/** The first problem of a value that fails the schema, or null when it fits. */
export function savedProblem(schema: z.ZodType, value: unknown): SavedProblem | null {
  const parsed = schema.safeParse(value);
  if (parsed.success) return null;
  const issue = parsed.error.issues[0];
  if (issue.code === 'unrecognized_keys') {
    const path = [...issue.path, issue.keys[0]];
    return { field: path.join('.'), got: shown(valueAt(value, path)), expected: 'no such field', unknown: true };
  }
  return { field: issue.path.join('.') || '(top level)', got: shown(valueAt(value, issue.path)), expected: expectedAt(schema, issue.path) ?? issue.message, unknown: false };
}

/** The value as its schema types it; `fail` words the first problem as the reader's own error. */
export function readSaved<S extends z.ZodType>(schema: S, value: unknown, fail: (p: SavedProblem) => Error): z.infer<S> {
  const parsed = schema.safeParse(value);
  if (parsed.success) return parsed.data;
  throw fail(savedProblem(schema, value)!);
}
