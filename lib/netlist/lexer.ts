import { error, type Diagnostic } from '../source/diagnostic.js';
import type { LineIndex } from '../source/span.js';
import type { Token } from './token.js';

const PUNCT = new Set(['(', ')', '{', '}', '[', ']', ',', ';', ':', '=', '+', '-', '*', '/', '%', '.']);

/** `Ω` and `µ` may start a word so that units can stand apart from their number (`33 kΩ`, `10 µF`). */
function isIdentStart(c: string): boolean {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c === '_' || c === 'Ω' || c === 'µ' || c === 'μ';
}

function isIdentPart(c: string): boolean {
  return isIdentStart(c) || (c >= '0' && c <= '9');
}

function isDigit(c: string | undefined): boolean {
  return c !== undefined && c >= '0' && c <= '9';
}

/** Characters a unit suffix may be made of when written against a number (`33kΩ`, `5%`). */
function isSuffixChar(c: string): boolean {
  return isIdentPart(c) || c === '%';
}

/**
 * Splits design text into tokens. Never throws: a character it cannot read becomes a
 * diagnostic and is skipped. Newlines are tokens: they end statements, and the parser
 * skips them inside lists. `#` starts a comment to the end of the line.
 */
export function lex(text: string, file: string, lines: LineIndex): { tokens: Token[]; diagnostics: Diagnostic[] } {
  const tokens: Token[] = [];
  const diagnostics: Diagnostic[] = [];
  let i = 0;
  const n = text.length;
  while (i < n) {
    const c = text[i] as string;
    if (c === ' ' || c === '\t' || c === '\r' || c === '\uFEFF') {
      i++;
      continue;
    }
    if (c === '\n') {
      tokens.push({ kind: 'newline', text: '\n', start: i, end: i + 1 });
      i++;
      continue;
    }
    if (c === '#') {
      while (i < n && text[i] !== '\n') i++;
      continue;
    }
    if (isIdentStart(c)) {
      const start = i;
      while (i < n && isIdentPart(text[i] as string)) i++;
      tokens.push({ kind: 'ident', text: text.slice(start, i), start, end: i });
      continue;
    }
    if (c === '.' && text[i + 1] === '.') {
      tokens.push({ kind: 'punct', text: '..', start: i, end: i + 2 });
      i += 2;
      continue;
    }
    if (isDigit(c) || (c === '.' && isDigit(text[i + 1]))) {
      const start = i;
      while (isDigit(text[i])) i++;
      if (text[i] === '.' && isDigit(text[i + 1])) {
        i++;
        while (isDigit(text[i])) i++;
      }
      if ((text[i] === 'e' || text[i] === 'E') && (isDigit(text[i + 1]) || ((text[i + 1] === '-' || text[i + 1] === '+') && isDigit(text[i + 2])))) {
        i += 2;
        while (isDigit(text[i])) i++;
      }
      const digits = text.slice(start, i);
      const suffixStart = i;
      while (i < n && isSuffixChar(text[i] as string)) i++;
      const value = Number(digits);
      tokens.push({ kind: 'number', text: text.slice(start, i), start, end: i, numberValue: value, suffix: text.slice(suffixStart, i) });
      if (!Number.isFinite(value)) {
        diagnostics.push(error('bad-number', `number '${digits}' is too large`, lines.span(file, start, suffixStart)));
      }
      continue;
    }
    if (c === '"') {
      const start = i;
      i++;
      let value = '';
      let closed = false;
      while (i < n) {
        const d = text[i] as string;
        if (d === '"') {
          closed = true;
          i++;
          break;
        }
        if (d === '\n') break;
        if (d === '\\' && i + 1 < n && (text[i + 1] === '"' || text[i + 1] === '\\')) {
          value += text[i + 1];
          i += 2;
          continue;
        }
        value += d;
        i++;
      }
      if (!closed) diagnostics.push(error('unterminated-string', 'this string has no closing quote on its line', lines.span(file, start, i)));
      tokens.push({ kind: 'string', text: value, start, end: i });
      continue;
    }
    if (PUNCT.has(c)) {
      tokens.push({ kind: 'punct', text: c, start: i, end: i + 1 });
      i++;
      continue;
    }
    if (c === '±') {
      diagnostics.push(error('bad-character', "'±' is not part of the language; write the tolerance as 'tol 5 %'", lines.span(file, i, i + 1)));
      i++;
      continue;
    }
    const code = text.codePointAt(i) as number;
    const width = code > 0xffff ? 2 : 1;
    diagnostics.push(error('bad-character', `unexpected character ${JSON.stringify(text.slice(i, i + width))} (U+${code.toString(16).toUpperCase().padStart(4, '0')})`, lines.span(file, i, i + width)));
    i += width;
  }
  tokens.push({ kind: 'eof', text: '', start: n, end: n });
  return { tokens, diagnostics };
}
