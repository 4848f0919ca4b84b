/*
 * Why our own reader rather than jsonc-parser (issue #17, item 14, tried and measured).
 * jsonc-parser gives a parse tree with offsets and, with comments and trailing commas
 * disallowed, is as strict as this file; but it does not keep our diagnostics. Put on it
 * with our messages mapped from its error codes (about 45 lines), it gave a different
 * message or line:col than this reader for 6,407 of 20,000 mutated copies of the JSON in
 * nets/*.expected.json. It names a stray character by its token alone ('unexpected
 * character "/"') where we say what the grammar wanted there ("expected a key in double
 * quotes", "expected ':'", "expected ',' or '}'"), and getting that back means following
 * the grammar's state over its tokens again. It places a bad escape or a control character
 * at the string's start, not at the character, and calls a line break inside a string
 * "unterminated"; it fails "1." at the number's start. It has no depth limit (20,000
 * nested brackets overflow the stack with a RangeError), so the MAX_JSON_DEPTH scan would
 * stay ours too. With all that mended we estimate 100–110 lines against this file's 170,
 * in two passes over the text and a conversion of its tree to ours: not simpler, so this
 * reader stays.
 */
import { error, type Checked, type Diagnostic } from '../source/diagnostic.js';
import { LineIndex, type SourceSpan } from '../source/span.js';

/** A JSON value with the span of its text, so that schema errors can point into the file. */
export type JsonNode =
  | { type: 'object'; entries: { key: string; keySpan: SourceSpan; value: JsonNode }[]; span: SourceSpan }
  | { type: 'array'; items: JsonNode[]; span: SourceSpan }
  | { type: 'string'; value: string; span: SourceSpan }
  | { type: 'number'; value: number; span: SourceSpan }
  | { type: 'boolean'; value: boolean; span: SourceSpan }
  | { type: 'null'; span: SourceSpan };

/** How many arrays and objects may enclose one another in a JSON design, the outermost object included. */
export const MAX_JSON_DEPTH = 64;

class JsonError extends Error {
  constructor(
    readonly offset: number,
    message: string,
  ) {
    super(message);
  }
}

/**
 * Parses JSON text (RFC 8259) into nodes that remember their spans. Never throws on bad
 * input: a syntax error is one `json-syntax` diagnostic at the offending character.
 *
 * Example: `parseJsonText('{"a": 1}', 'x.json').value` is an object node whose entry `a`
 * holds a number node spanning 1:7–1:8.
 */
export function parseJsonText(text: string, file: string, lines = new LineIndex(text)): Checked<JsonNode | undefined> {
  let i = 0;
  const span = (start: number, end: number) => lines.span(file, start, end);
  const ws = () => {
    while (i < text.length) {
      const c = text.charCodeAt(i);
      if (c === 32 || c === 9 || c === 10 || c === 13) i++;
      else break;
    }
  };
  const fail = (message: string): never => {
    throw new JsonError(i, message);
  };
  const str = (): string => {
    const start = i;
    i++;
    let out = '';
    for (;;) {
      if (i >= text.length) {
        i = start;
        fail('unterminated string');
      }
      const c = text[i] as string;
      if (c === '"') {
        i++;
        return out;
      }
      if (c.charCodeAt(0) < 0x20) fail('control character in a string');
      if (c === '\\') {
        const e = text[i + 1];
        const simple: Record<string, string> = { '"': '"', '\\': '\\', '/': '/', b: '\b', f: '\f', n: '\n', r: '\r', t: '\t' };
        if (e !== undefined && simple[e] !== undefined) {
          out += simple[e];
          i += 2;
          continue;
        }
        if (e === 'u' && /^[0-9a-fA-F]{4}$/.test(text.slice(i + 2, i + 6))) {
          out += String.fromCharCode(parseInt(text.slice(i + 2, i + 6), 16));
          i += 6;
          continue;
        }
        fail('bad escape in a string');
      }
      out += c;
      i++;
    }
  };
  const value = (depth: number): JsonNode => {
    if (depth >= MAX_JSON_DEPTH) fail(`nested more than ${MAX_JSON_DEPTH} deep`);
    ws();
    const start = i;
    const c = text[i];
    if (c === '{') {
      i++;
      const entries: { key: string; keySpan: SourceSpan; value: JsonNode }[] = [];
      ws();
      if (text[i] === '}') {
        i++;
        return { type: 'object', entries, span: span(start, i) };
      }
      for (;;) {
        ws();
        if (text[i] !== '"') fail('expected a key in double quotes');
        const keyStart = i;
        const key = str();
        const keySpan = span(keyStart, i);
        ws();
        if (text[i] !== ':') fail("expected ':'");
        i++;
        entries.push({ key, keySpan, value: value(depth + 1) });
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        if (text[i] === '}') {
          i++;
          return { type: 'object', entries, span: span(start, i) };
        }
        fail("expected ',' or '}'");
      }
    }
    if (c === '[') {
      i++;
      const items: JsonNode[] = [];
      ws();
      if (text[i] === ']') {
        i++;
        return { type: 'array', items, span: span(start, i) };
      }
      for (;;) {
        items.push(value(depth + 1));
        ws();
        if (text[i] === ',') {
          i++;
          continue;
        }
        if (text[i] === ']') {
          i++;
          return { type: 'array', items, span: span(start, i) };
        }
        fail("expected ',' or ']'");
      }
    }
    if (c === '"') {
      const s = str();
      return { type: 'string', value: s, span: span(start, i) };
    }
    const num = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(text.slice(i, i + 400));
    if (num) {
      i += num[0].length;
      return { type: 'number', value: Number(num[0]), span: span(start, i) };
    }
    for (const [word, node] of [
      ['true', { type: 'boolean', value: true }],
      ['false', { type: 'boolean', value: false }],
      ['null', { type: 'null' }],
    ] as const) {
      if (text.startsWith(word, i)) {
        i += word.length;
        return { ...node, span: span(start, i) } as JsonNode;
      }
    }
    return fail(i >= text.length ? 'unexpected end of the file' : `unexpected character ${JSON.stringify(text[i])}`);
  };
  const diagnostics: Diagnostic[] = [];
  try {
    if (text.charCodeAt(0) === 0xfeff) i = 1;
    const root = value(0);
    ws();
    if (i < text.length) fail('unexpected text after the JSON value');
    return { value: root, diagnostics };
  } catch (e) {
    if (!(e instanceof JsonError)) throw e;
    const at = Math.min(e.offset, text.length);
    diagnostics.push(error('json-syntax', `JSON: ${e.message}`, span(at, Math.min(at + 1, text.length))));
    return { value: undefined, diagnostics };
  }
}
