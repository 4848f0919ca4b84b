import { error, type Checked, type Diagnostic } from '../source/diagnostic.js';
import { LineIndex, type SourceSpan } from '../source/span.js';
import { didYouMean } from '../source/suggest.js';
import type {
  Assignment,
  DesignFile,
  Expr,
  Name,
  NetRef,
  PartKind,
  PartStmt,
  PinArg,
  Statement,
  StageItem,
  TypeRef,
  ValueSpec,
} from './ast.js';
import { lex } from './lexer.js';
import type { Token } from './token.js';
import { parseUnitSuffix } from './units.js';

/** How deeply parentheses and unary signs may nest in one expression (100 is allowed, 101 is not). */
export const MAX_EXPRESSION_DEPTH = 100;

const TOP_KEYWORDS = ['title', 'include', 'let', 'defaults', 'rail', 'type', 'stage', 'block', 'instance'];
const PART_KEYWORDS: PartKind[] = ['resistor', 'capacitor', 'diode', 'section', 'switch', 'button', 'drive'];
const BLOCK_KEYWORDS = ['let', 'param', 'stage', 'instance'];
const STAGE_KEYWORDS = ['tube', 'load', 'input', 'cathode', 'screen'];

/** Thrown inside the parser to abandon one statement; caught before it leaves this file. */
class Bail extends Error {}

/**
 * Parses one design file into its syntax tree. Never throws on bad input: every problem
 * becomes a diagnostic, and the parser skips to the next statement and carries on, so one
 * run reports every syntax error in the file.
 *
 * Example: `parseDesignText('rail bp = 24 V\n', 'x.tube').value.statements[0].kind` is `'rail'`.
 */
export function parseDesignText(text: string, file: string, lines = new LineIndex(text)): Checked<DesignFile> {
  const { tokens, diagnostics } = lex(text, file, lines);
  const parser = new Parser(tokens, file, lines, diagnostics);
  const statements = parser.parseFile();
  return { value: { file, statements }, diagnostics };
}

class Parser {
  private pos = 0;
  private exprDepth = 0;

  constructor(
    private readonly tokens: Token[],
    private readonly file: string,
    private readonly lines: LineIndex,
    private readonly diagnostics: Diagnostic[],
  ) {}

  // ---- token helpers -------------------------------------------------------------------

  private peek(ahead = 0): Token {
    return this.tokens[Math.min(this.pos + ahead, this.tokens.length - 1)] as Token;
  }

  private next(): Token {
    const t = this.peek();
    if (this.pos < this.tokens.length - 1) this.pos++;
    return t;
  }

  private spanOf(start: number, end: number): SourceSpan {
    return this.lines.span(this.file, start, end);
  }

  private tokenSpan(t: Token): SourceSpan {
    return this.spanOf(t.start, t.end);
  }

  private since(start: Token): SourceSpan {
    const last = this.tokens[Math.max(0, this.pos - 1)] as Token;
    return this.spanOf(start.start, Math.max(start.end, last.end));
  }

  private isPunct(text: string, t = this.peek()): boolean {
    return t.kind === 'punct' && t.text === text;
  }

  private isWord(text: string, t = this.peek()): boolean {
    return t.kind === 'ident' && t.text === text;
  }

  private atStatementEnd(t = this.peek()): boolean {
    return t.kind === 'newline' || t.kind === 'eof' || this.isPunct(';', t) || this.isPunct('}', t);
  }

  private describe(t: Token): string {
    switch (t.kind) {
      case 'eof':
        return 'the end of the file';
      case 'newline':
        return 'the end of the line';
      case 'string':
        return `the string "${t.text}"`;
      default:
        return `'${t.text}'`;
    }
  }

  private fail(message: string, t = this.peek(), notes: string[] = []): never {
    this.diagnostics.push(error('unexpected-token', message, this.tokenSpan(t), notes));
    throw new Bail();
  }

  private expectPunct(text: string, what = `'${text}'`): Token {
    if (!this.isPunct(text)) this.fail(`expected ${what}, found ${this.describe(this.peek())}`);
    return this.next();
  }

  private expectWord(text: string): Token {
    if (!this.isWord(text)) this.fail(`expected '${text}', found ${this.describe(this.peek())}`);
    return this.next();
  }

  private expectName(what: string): Name {
    const t = this.peek();
    if (t.kind !== 'ident') this.fail(`expected ${what}, found ${this.describe(t)}`);
    this.next();
    return { text: t.text, span: this.tokenSpan(t) };
  }

  private skipNewlines(): void {
    while (this.peek().kind === 'newline') this.next();
  }

  private skipSeparators(alsoCommas = false): void {
    for (;;) {
      const t = this.peek();
      if (t.kind === 'newline' || this.isPunct(';', t) || (alsoCommas && this.isPunct(',', t))) this.next();
      else return;
    }
  }

  /** Skips the rest of a broken statement: to the end of its line, over any `{ … }` it opened. */
  private synchronize(): void {
    let depth = 0;
    for (;;) {
      const t = this.peek();
      if (t.kind === 'eof') return;
      if (this.isPunct('{', t)) depth++;
      else if (this.isPunct('}', t)) {
        if (depth === 0) return;
        depth--;
        this.next();
        if (depth === 0 && this.atStatementEnd()) return;
        continue;
      } else if (depth === 0 && (t.kind === 'newline' || this.isPunct(';', t))) return;
      this.next();
    }
  }

  private endStatement(): void {
    if (!this.atStatementEnd()) this.fail(`expected the end of the statement, found ${this.describe(this.peek())}`);
  }

  // ---- statements ----------------------------------------------------------------------

  parseFile(): Statement[] {
    // A loop, not recursion per stray '}': a file of 10,000 of them must not exhaust the stack.
    let statements = this.parseStatements('top');
    while (this.isPunct('}')) {
      this.diagnostics.push(error('unexpected-token', "this '}' closes nothing", this.tokenSpan(this.peek())));
      this.next();
      statements = statements.concat(this.parseStatements('top'));
    }
    return statements;
  }

  private parseStatements(where: 'top' | 'block'): Statement[] {
    const out: Statement[] = [];
    for (;;) {
      this.skipSeparators();
      const t = this.peek();
      if (t.kind === 'eof' || this.isPunct('}', t)) return out;
      try {
        out.push(this.parseStatement(where));
        this.endStatement();
      } catch (e) {
        if (!(e instanceof Bail)) throw e;
        this.synchronize();
      }
    }
  }

  private parseStatement(where: 'top' | 'block'): Statement {
    const t = this.peek();
    if (t.kind !== 'ident') this.fail(`expected a statement, found ${this.describe(t)}`);
    const word = t.text;
    const allowed = where === 'top' ? [...TOP_KEYWORDS, ...PART_KEYWORDS] : [...BLOCK_KEYWORDS, ...PART_KEYWORDS];
    if (!allowed.includes(word)) {
      if (where === 'block' && TOP_KEYWORDS.includes(word)) this.fail(`'${word}' belongs at the top of a file, not inside a block`);
      if (where === 'top' && word === 'param') this.fail("'param' belongs inside a block; at the top of a file use 'let'");
      this.fail(`unknown statement '${word}'`, t, didYouMean(word, allowed));
    }
    this.next();
    switch (word) {
      case 'title': {
        const s = this.peek();
        if (s.kind !== 'string') this.fail(`expected the title in quotes, found ${this.describe(s)}`);
        this.next();
        return { kind: 'title', text: s.text, span: this.since(t) };
      }
      case 'include': {
        const s = this.peek();
        if (s.kind !== 'string') this.fail(`expected a file name in quotes, found ${this.describe(s)}`);
        this.next();
        return { kind: 'include', path: s.text, pathSpan: this.tokenSpan(s), span: this.since(t) };
      }
      case 'let':
      case 'param': {
        const name = this.expectName('a name');
        this.expectPunct('=');
        const value = this.parseExpr();
        return { kind: word, name, value, span: this.since(t) };
      }
      case 'defaults':
        return this.parseDefaults(t);
      case 'rail':
        return this.parseRail(t);
      case 'type':
        return this.parseType(t);
      case 'stage':
        return this.parseStage(t);
      case 'block':
        return this.parseBlock(t);
      case 'instance':
        return this.parseInstance(t);
      default:
        return this.parsePart(t, word as PartKind);
    }
  }

  private parseDefaults(start: Token): Statement {
    let tube: TypeRef | undefined;
    const fields = this.parseAssignments('{', '}', (name) => {
      if (name.text !== 'tube') return false;
      tube = this.parseTypeRef();
      return true;
    });
    return { kind: 'defaults', fields, tube, span: this.since(start) };
  }

  private parseRail(start: Token): Statement {
    const name = this.expectName('a rail name');
    this.expectPunct('=');
    const volts = this.parseExpr();
    let tol: Expr | undefined;
    let source: Expr | undefined;
    while (this.isWord('tol') || this.isWord('source')) {
      const kw = this.next();
      if (kw.text === 'tol') tol = this.parseOnce(tol, kw);
      else source = this.parseOnce(source, kw);
    }
    return { kind: 'rail', name, volts, tol, source, span: this.since(start) };
  }

  private parseOnce(previous: Expr | undefined, kw: Token): Expr {
    if (previous) this.fail(`'${kw.text}' is given twice`, kw);
    return this.parseExpr();
  }

  private parseType(start: Token): Statement {
    const name = this.expectName('a type name');
    if (this.isWord('like')) {
      this.next();
      const type = this.parseTypeRef();
      const fields = this.isPunct('{') ? this.parseAssignments('{', '}') : [];
      return { kind: 'type', name, base: { kind: 'like', type }, fields, span: this.since(start) };
    }
    const kind = this.parseDashedName('a model kind (koren-triode, koren-pentode or child-langmuir) or \'like\'');
    const fields = this.parseAssignments('{', '}');
    return { kind: 'type', name, base: { kind: 'kind', name: kind }, fields, span: this.since(start) };
  }

  /** Reads `koren-triode`: words joined by '-' with no space between them. */
  private parseDashedName(what: string): Name {
    const first = this.expectName(what);
    let text = first.text;
    let end = this.tokens[this.pos - 1] as Token;
    while (this.isPunct('-') && this.peek().start === end.end && this.peek(1).kind === 'ident' && this.peek(1).start === this.peek().end) {
      this.next();
      end = this.next();
      text += '-' + end.text;
    }
    return { text, span: { file: this.file, start: first.span.start, end: this.lines.at(end.end) } };
  }

  private parseTypeRef(): TypeRef {
    const t = this.peek();
    if (t.kind === 'string') {
      this.next();
      return { name: { text: t.text, span: this.tokenSpan(t) }, quoted: true };
    }
    if (t.kind === 'number') {
      this.fail(`expected a tube type, found ${this.describe(t)}`, t, [`a library type designation goes in quotes: "${t.text}"`]);
    }
    return { name: this.expectName('a tube type'), quoted: false };
  }

  /**
   * `{ a = 1, b = 2 }` or `( … )`; separators are commas, semicolons or newlines.
   * `special` may consume the value of a field itself (for `tube = LT` in defaults).
   */
  private parseAssignments(open: string, close: string, special?: (name: Name) => boolean): Assignment[] {
    this.expectPunct(open);
    const out: Assignment[] = [];
    for (;;) {
      this.skipSeparators(true);
      if (this.isPunct(close)) {
        this.next();
        return out;
      }
      const name = this.expectName(`a field name or '${close}'`);
      this.expectPunct('=');
      if (special?.(name)) continue;
      const value = this.parseExpr();
      out.push({ name, value, span: { file: this.file, start: name.span.start, end: value.span.end } });
      if (!this.isPunct(close) && !this.isPunct(',') && !this.isPunct(';') && this.peek().kind !== 'newline') {
        this.fail(`expected ',' or '${close}', found ${this.describe(this.peek())}`);
      }
    }
  }

  private parseNetRef(what = 'a net name'): NetRef {
    const name = this.expectName(what);
    let index: Expr | undefined;
    if (this.isPunct('[')) {
      this.next();
      index = this.parseExpr();
      this.expectPunct(']');
    }
    return { name, index, span: { file: this.file, start: name.span.start, end: this.lines.at((this.tokens[this.pos - 1] as Token).end) } };
  }

  private parseValueSpec(allowRating = true): ValueSpec {
    const start = this.peek();
    const value = this.parseExpr();
    return this.parseSpecTail({ value, tol: undefined, rating: undefined, span: this.since(start) }, allowRating);
  }

  /** `tol …` and `rating …` after a value, in either order; also after `to NET` (`load 33 k to bp tol 1 %`). */
  private parseSpecTail(spec: ValueSpec, allowRating = true): ValueSpec {
    while (this.isWord('tol') || (allowRating && this.isWord('rating'))) {
      const kw = this.next();
      if (kw.text === 'tol') spec.tol = this.parseOnce(spec.tol, kw);
      else spec.rating = this.parseOnce(spec.rating, kw);
    }
    return spec;
  }

  /** `VALUE [tol …] [rating …] to NET [tol …] [rating …]`. */
  private parseSpecTo(what: string): { spec: ValueSpec; to: NetRef } {
    const spec = this.parseValueSpec();
    this.expectWord('to');
    const to = this.parseNetRef(what);
    return { spec: this.parseSpecTail(spec), to };
  }

  private parseStage(start: Token): Statement {
    const out = this.parseNetRef('the name of the net this stage drives');
    this.expectPunct('{');
    const items: StageItem[] = [];
    for (;;) {
      this.skipSeparators();
      const t = this.peek();
      if (this.isPunct('}', t)) {
        this.next();
        break;
      }
      if (t.kind === 'eof') this.fail("this stage has no closing '}'", start);
      try {
        items.push(this.parseStageItem());
        this.endStatement();
      } catch (e) {
        if (!(e instanceof Bail)) throw e;
        this.synchronize();
      }
    }
    return { kind: 'stage', out, items, span: this.since(start) };
  }

  private parseStageItem(): StageItem {
    const t = this.peek();
    if (t.kind !== 'ident' || !STAGE_KEYWORDS.includes(t.text)) {
      const notes = t.kind === 'ident' ? didYouMean(t.text, STAGE_KEYWORDS) : [];
      this.fail(`expected one of ${STAGE_KEYWORDS.join(', ')} in a stage, found ${this.describe(t)}`, t, notes);
    }
    this.next();
    switch (t.text) {
      case 'tube':
        return { kind: 'tube', type: this.parseTypeRef(), span: this.since(t) };
      case 'load': {
        const { spec, to } = this.parseSpecTo('the rail or net the load returns to');
        return { kind: 'load', spec, to, span: this.since(t) };
      }
      case 'cathode':
        return { kind: 'cathode', net: this.parseNetRef(), span: this.since(t) };
      case 'screen': {
        const a = this.peek();
        const b = this.peek(1);
        if (a.kind === 'ident' && (this.atStatementEnd(b) || this.isPunct('[', b))) {
          return { kind: 'screen', spec: undefined, to: this.parseNetRef(), span: this.since(t) };
        }
        const { spec, to } = this.parseSpecTo('the rail the screen resistor returns to');
        return { kind: 'screen', spec, to, span: this.since(t) };
      }
      default: {
        const from = this.parseNetRef('the net this input comes from');
        if (this.isWord('direct')) {
          this.next();
          return { kind: 'input', from, series: undefined, pulldown: undefined, speedup: undefined, span: this.since(t) };
        }
        this.expectWord('series');
        const series = this.parseValueSpec();
        let speedup: Expr | undefined;
        if (this.isWord('speedup')) {
          this.next();
          speedup = this.parseExpr();
        }
        let pulldown: { spec: ValueSpec; to: NetRef } | undefined;
        if (this.isWord('pulldown')) {
          this.next();
          pulldown = this.parseSpecTo('the rail the pull-down returns to');
        }
        return { kind: 'input', from, series, pulldown, speedup, span: this.since(t) };
      }
    }
  }

  private parsePins(): { pins: PinArg[]; span: SourceSpan } {
    const open = this.expectPunct('(', "'(' and the part's connections");
    const pins: PinArg[] = [];
    for (;;) {
      this.skipNewlines();
      if (this.isPunct(')')) break;
      let pin: Name | undefined;
      if (this.peek().kind === 'ident' && this.isPunct(':', this.peek(1))) {
        pin = this.expectName('a pin name');
        this.next();
      }
      pins.push({ pin, net: this.parseNetRef() });
      this.skipNewlines();
      if (this.isPunct(',')) this.next();
      else if (!this.isPunct(')')) this.fail(`expected ',' or ')', found ${this.describe(this.peek())}`);
    }
    const close = this.next();
    return { pins, span: this.spanOf(open.start, close.end) };
  }

  private parsePart(start: Token, part: PartKind): PartStmt {
    const name = this.expectName(`a name for the ${part}`);
    const type = part === 'section' ? this.parseTypeRef() : undefined;
    const { pins, span: pinsSpan } = this.parsePins();
    let spec: ValueSpec | undefined;
    let source: Expr | undefined;
    let closed: boolean | undefined;
    let fields: Assignment[] = [];
    switch (part) {
      case 'resistor':
      case 'capacitor':
        spec = this.parseValueSpec(part === 'resistor');
        break;
      case 'drive':
        spec = this.parseValueSpec(false);
        if (this.isWord('source')) source = this.parseOnce(undefined, this.next());
        break;
      case 'diode':
        if (this.isPunct('{')) fields = this.parseAssignments('{', '}');
        break;
      case 'switch':
        if (this.isWord('open') || this.isWord('closed')) closed = this.next().text === 'closed';
        break;
      default:
        break;
    }
    return { kind: 'part', part, name, type, pins, pinsSpan, spec, source, closed, fields, span: this.since(start) };
  }

  private parseBlock(start: Token): Statement {
    const name = this.expectName('a block name');
    this.expectPunct('(', "'(' and the block's ports");
    const ports: Name[] = [];
    for (;;) {
      this.skipNewlines();
      if (this.isPunct(')')) break;
      ports.push(this.expectName('a port name'));
      this.skipNewlines();
      if (this.isPunct(',')) this.next();
      else if (!this.isPunct(')')) this.fail(`expected ',' or ')', found ${this.describe(this.peek())}`);
    }
    this.next();
    this.skipSeparators();
    this.expectPunct('{');
    const body = this.parseStatements('block');
    if (!this.isPunct('}')) this.fail(`block '${name.text}' has no closing '}'`, start);
    this.next();
    return { kind: 'block', name, ports, body, span: this.since(start) };
  }

  private parseInstance(start: Token): Statement {
    const name = this.expectName('an instance name');
    let array: { variable: Name; from: Expr; to: Expr } | undefined;
    if (this.isPunct('[')) {
      this.next();
      const variable = this.expectName('an index name, as in [i in 0..7]');
      this.expectWord('in');
      const from = this.parseExpr();
      this.expectPunct('..', "'..'");
      const to = this.parseExpr();
      this.expectPunct(']');
      array = { variable, from, to };
    }
    this.expectWord('of');
    const block = this.expectName('a block name');
    const { pins: ports, span: portsSpan } = this.parsePins();
    let overrides: Assignment[] = [];
    if (this.isWord('with')) {
      this.next();
      overrides = this.parseAssignments('(', ')');
    }
    return { kind: 'instance', name, array, block, ports, portsSpan, overrides, span: this.since(start) };
  }

  // ---- expressions ---------------------------------------------------------------------

  parseExpr(): Expr {
    let left = this.parseTerm();
    while (this.isPunct('+') || this.isPunct('-')) {
      const op = this.next().text as '+' | '-';
      const right = this.parseTerm();
      left = { kind: 'binary', op, left, right, span: { file: this.file, start: left.span.start, end: right.span.end } };
    }
    return left;
  }

  private parseTerm(): Expr {
    let left = this.parseUnary();
    while (this.isPunct('*') || this.isPunct('/') || this.isWord('mod')) {
      const op = this.next().text as '*' | '/' | 'mod';
      const right = this.parseUnary();
      left = { kind: 'binary', op, left, right, span: { file: this.file, start: left.span.start, end: right.span.end } };
    }
    return left;
  }

  private parseUnary(): Expr {
    if (this.exprDepth > MAX_EXPRESSION_DEPTH) {
      this.diagnostics.push(error('nesting-too-deep', `expression nested more than ${MAX_EXPRESSION_DEPTH} deep`, this.tokenSpan(this.peek())));
      throw new Bail();
    }
    this.exprDepth++;
    try {
      const t = this.peek();
      if (this.isPunct('-') || this.isPunct('+')) {
        this.next();
        const operand = this.parseUnary();
        return { kind: 'unary', op: t.text as '-' | '+', operand, span: { file: this.file, start: this.lines.at(t.start), end: operand.span.end } };
      }
      return this.parsePrimary();
    } finally {
      this.exprDepth--;
    }
  }

  private parsePrimary(): Expr {
    const t = this.peek();
    if (t.kind === 'number') {
      this.next();
      return this.numberExpr(t);
    }
    if (t.kind === 'ident') {
      this.next();
      return { kind: 'name', name: t.text, span: this.tokenSpan(t) };
    }
    if (this.isPunct('(')) {
      this.next();
      const inner = this.parseExpr();
      this.expectPunct(')');
      return inner;
    }
    this.fail(`expected a value, found ${this.describe(t)}`);
  }

  /**
   * A number with its unit: written against it (`33k`, `4k7`, `5%`) or as the next word on
   * the line (`33 kΩ`, `5 %`). `4k7` is the resistor code of IEC 60062 (4.7 k).
   */
  private numberExpr(t: Token): Expr {
    let value = t.numberValue as number;
    let unit = t.suffix ?? '';
    let end = t.end;
    const rkm = /^([pnuµμmkMGR])(\d+)(.*)$/.exec(unit);
    if (rkm && /^\d+$/.test(t.text.slice(0, t.text.length - unit.length))) {
      const [, mult, frac, rest] = rkm as unknown as [string, string, string, string];
      const scale = mult === 'R' ? 1 : (parseUnitSuffix(mult)?.scale ?? 1);
      value = Number(`${t.text.slice(0, t.text.length - unit.length)}.${frac}`) * scale;
      unit = rest;
    }
    if (unit === '') {
      const n = this.peek();
      if (n.kind === 'ident' && n.start > t.end && parseUnitSuffix(n.text) && !this.lineBreakBetween(t, n)) {
        unit = n.text;
        end = n.end;
        this.next();
      } else if (this.isPunct('%', n)) {
        unit = '%';
        end = n.end;
        this.next();
      }
    }
    const parsed = parseUnitSuffix(unit);
    const span = this.spanOf(t.start, end);
    if (!parsed) {
      const notes = /^[A-Z]+\d/.test(unit) ? [`a library type designation goes in quotes: "${t.text}"`] : ['units: V, A, Ω (or ohm), F, W, s, %, with p n u µ m k M G in front'];
      this.diagnostics.push(error('unknown-unit', `unknown unit '${unit}'`, span, notes));
      return { kind: 'number', value: NaN, unit, span };
    }
    return { kind: 'number', value: value * parsed.scale, unit, span };
  }

  private lineBreakBetween(a: Token, b: Token): boolean {
    return this.lines.at(a.start).line !== this.lines.at(b.start).line;
  }
}
