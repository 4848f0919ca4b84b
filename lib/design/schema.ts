import { error, warning, type Diagnostic } from '../source/diagnostic.js';
import type { SourceSpan } from '../source/span.js';
import { didYouMean } from '../source/suggest.js';
import type { JsonNode } from './jsonText.js';

/**
 * A tiny schema language for the JSON forms tubemargin reads. Each external schema is
 * declared once with these combinators; its TypeScript type is derived with `Infer`, so the
 * runtime check and the static type cannot drift apart. Reading reports every problem with
 * the span of the offending value, and never throws.
 */
export interface Schema<T> {
  /** What the value must be, for messages ("a number", "one of …"). */
  readonly describe: string;
  readonly optional: boolean;
  read(node: JsonNode, path: string, diagnostics: Diagnostic[]): T | undefined;
}

export type Infer<S> = S extends Schema<infer T> ? T : never;

function mismatch(node: JsonNode, path: string, expected: string, diagnostics: Diagnostic[]): undefined {
  const found = node.type === 'null' ? 'null' : node.type === 'object' ? 'an object' : node.type === 'array' ? 'an array' : `the ${node.type} ${JSON.stringify(node.value)}`;
  diagnostics.push(error('json-schema', `${path} must be ${expected}, not ${found}`, node.span));
  return undefined;
}

export function str(): Schema<string> {
  return {
    describe: 'a string',
    optional: false,
    read: (node, path, d) => (node.type === 'string' ? node.value : mismatch(node, path, 'a string', d)),
  };
}

export function num(): Schema<number> {
  return {
    describe: 'a number',
    optional: false,
    read: (node, path, d) => (node.type === 'number' ? node.value : mismatch(node, path, 'a number', d)),
  };
}

export function bool(): Schema<boolean> {
  return {
    describe: 'true or false',
    optional: false,
    read: (node, path, d) => (node.type === 'boolean' ? node.value : mismatch(node, path, 'true or false', d)),
  };
}

export function literal<const L extends string>(...values: L[]): Schema<L> {
  const describe = values.length === 1 ? JSON.stringify(values[0]) : `one of ${values.map((v) => JSON.stringify(v)).join(', ')}`;
  return {
    describe,
    optional: false,
    read: (node, path, d) => {
      if (node.type === 'string' && (values as string[]).includes(node.value)) return node.value as L;
      if (node.type === 'string') {
        d.push(error('json-schema', `${path} must be ${describe}, not ${JSON.stringify(node.value)}`, node.span, didYouMean(node.value, values)));
        return undefined;
      }
      return mismatch(node, path, describe, d);
    },
  };
}

export function optional<T>(inner: Schema<T>): Schema<T | undefined> {
  return { ...inner, optional: true, read: inner.read };
}

export function array<T>(item: Schema<T>): Schema<T[]> {
  return {
    describe: `a list of ${item.describe}`,
    optional: false,
    read: (node, path, d) => {
      if (node.type !== 'array') return mismatch(node, path, 'a list', d);
      const out: T[] = [];
      let ok = true;
      node.items.forEach((it, i) => {
        const v = item.read(it, `${path}[${i}]`, d);
        if (v === undefined) ok = false;
        else out.push(v);
      });
      return ok ? out : undefined;
    },
  };
}

type Shape = Record<string, Schema<unknown>>;
type OptionalKeys<S extends Shape> = { [K in keyof S]: S[K]['optional'] extends true ? K : undefined extends Infer<S[K]> ? K : never }[keyof S];
type Simplify<T> = { [K in keyof T]: T[K] } & {};
export type InferShape<S extends Shape> = Simplify<
  { [K in Exclude<keyof S, OptionalKeys<S>>]: Infer<S[K]> } & { [K in OptionalKeys<S>]?: Exclude<Infer<S[K]>, undefined> }
>;

/** The span each field of the last object read was found at, for checks after the schema. */
export const SPANS = Symbol('spans');
export type WithSpans<T> = T & { [SPANS]?: Record<string, SourceSpan> };

/**
 * An object with the given fields. Unknown fields are a warning (with "did you mean"), not
 * an error, so newer files stay readable; missing required fields are errors. The result
 * carries the span of each field under the `SPANS` symbol.
 */
export function object<S extends Shape>(shape: S): Schema<WithSpans<InferShape<S>>> {
  const keys = Object.keys(shape);
  return {
    describe: 'an object',
    optional: false,
    read: (node, path, d) => {
      if (node.type !== 'object') return mismatch(node, path, 'an object', d);
      const out: Record<string | symbol, unknown> = {};
      const spans: Record<string, SourceSpan> = { '': node.span };
      let ok = true;
      const seen = new Set<string>();
      for (const { key, keySpan, value } of node.entries) {
        if (seen.has(key)) {
          d.push(error('json-schema', `${path} gives "${key}" twice`, keySpan));
          ok = false;
          continue;
        }
        seen.add(key);
        const field = Object.hasOwn(shape, key) ? shape[key] : undefined;
        if (!field) {
          d.push(warning('unknown-field', `${path} has an unknown field "${key}"; it is ignored`, keySpan, didYouMean(key, keys)));
          continue;
        }
        spans[key] = value.span;
        if (field.optional && value.type === 'null') continue;
        const v = field.read(value, `${path}.${key}`, d);
        if (v === undefined) ok = false;
        else out[key] = v;
      }
      for (const key of keys) {
        if (!seen.has(key) && !(shape[key] as Schema<unknown>).optional) {
          d.push(error('json-schema', `${path} lacks the field "${key}" (${(shape[key] as Schema<unknown>).describe})`, node.span));
          ok = false;
        }
      }
      out[SPANS] = spans;
      return ok ? (out as WithSpans<InferShape<S>>) : undefined;
    },
  };
}

/** One of several object shapes, chosen by the string in field `tag`. */
export function variants<const Tag extends string, V extends Record<string, Schema<unknown>>>(tag: Tag, options: V): Schema<Infer<V[keyof V]>> {
  const names = Object.keys(options);
  return {
    describe: `an object whose "${tag}" is one of ${names.join(', ')}`,
    optional: false,
    read: (node, path, d) => {
      if (node.type !== 'object') return mismatch(node, path, 'an object', d);
      const t = node.entries.find((e) => e.key === tag)?.value;
      if (!t) {
        d.push(error('json-schema', `${path} lacks the field "${tag}" (one of ${names.join(', ')})`, node.span));
        return undefined;
      }
      if (t.type !== 'string' || !Object.hasOwn(options, t.value)) {
        d.push(error('json-schema', `${path}.${tag} must be one of ${names.join(', ')}`, t.span, t.type === 'string' ? didYouMean(t.value, names) : []));
        return undefined;
      }
      return (options[t.value] as Schema<Infer<V[keyof V]>>).read(node, path, d);
    },
  };
}
