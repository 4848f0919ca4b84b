import type { SourceSpan } from '../source/span.js';

/**
 * The syntax tree of one design file, as written: nothing resolved, nothing evaluated.
 * Every node carries the span it came from.
 */

export type Expr =
  | { kind: 'number'; value: number; unit: string; span: SourceSpan }
  | { kind: 'name'; name: string; span: SourceSpan }
  | { kind: 'unary'; op: '-' | '+'; operand: Expr; span: SourceSpan }
  | { kind: 'binary'; op: '+' | '-' | '*' | '/' | 'mod'; left: Expr; right: Expr; span: SourceSpan };

/** A name as written, with its span. */
export interface Name {
  text: string;
  span: SourceSpan;
}

/** A net reference: `q`, `bias`, `q[i + 1]`. */
export interface NetRef {
  name: Name;
  index: Expr | undefined;
  span: SourceSpan;
}

/** A value with an optional tolerance and power rating: `220 k tol 1 % rating 0.5 W`. */
export interface ValueSpec {
  value: Expr;
  tol: Expr | undefined;
  rating: Expr | undefined;
  span: SourceSpan;
}

/** `name = expr` in a brace list (tube parameters, defaults, instance overrides). */
export interface Assignment {
  name: Name;
  value: Expr;
  span: SourceSpan;
}

/** A tube type named by a type of the design (`LT`) or a library designation (`"12AU7"`). */
export interface TypeRef {
  name: Name;
  quoted: boolean;
}

/** One pin connection in `( … )`: positional (`q`) or named (`plate: q`). */
export interface PinArg {
  pin: Name | undefined;
  net: NetRef;
}

export interface StageInput {
  kind: 'input';
  from: NetRef;
  /** Absent when the grid is tied straight to the net (`input x direct`). */
  series: ValueSpec | undefined;
  pulldown: { spec: ValueSpec; to: NetRef } | undefined;
  /** A speed-up capacitor across the series resistor (`series 470 k speedup 47 pF`). */
  speedup: Expr | undefined;
  span: SourceSpan;
}

export type StageItem =
  | { kind: 'tube'; type: TypeRef; span: SourceSpan }
  | { kind: 'load'; spec: ValueSpec; to: NetRef; span: SourceSpan }
  | StageInput
  | { kind: 'cathode'; net: NetRef; span: SourceSpan }
  | { kind: 'screen'; spec: ValueSpec | undefined; to: NetRef; span: SourceSpan };

export type PartKind = 'resistor' | 'capacitor' | 'diode' | 'section' | 'switch' | 'button' | 'drive';

export interface PartStmt {
  kind: 'part';
  part: PartKind;
  name: Name;
  /** `section` only: the tube type. */
  type: TypeRef | undefined;
  pins: PinArg[];
  pinsSpan: SourceSpan;
  /** resistor, capacitor, drive: the value with tolerance and rating. */
  spec: ValueSpec | undefined;
  /** drive: source resistance. */
  source: Expr | undefined;
  /** switch: written state. */
  closed: boolean | undefined;
  /** diode: `{ is = …, n = …, rs = … }`. */
  fields: Assignment[];
  span: SourceSpan;
}

export type Statement =
  | { kind: 'title'; text: string; span: SourceSpan }
  | { kind: 'include'; path: string; pathSpan: SourceSpan; span: SourceSpan }
  | { kind: 'let'; name: Name; value: Expr; span: SourceSpan }
  | { kind: 'param'; name: Name; value: Expr; span: SourceSpan }
  | { kind: 'defaults'; fields: Assignment[]; tube: TypeRef | undefined; span: SourceSpan }
  | { kind: 'rail'; name: Name; volts: Expr; tol: Expr | undefined; source: Expr | undefined; span: SourceSpan }
  | { kind: 'type'; name: Name; base: { kind: 'kind'; name: Name } | { kind: 'like'; type: TypeRef }; fields: Assignment[]; span: SourceSpan }
  | { kind: 'stage'; out: NetRef; items: StageItem[]; span: SourceSpan }
  | PartStmt
  | { kind: 'block'; name: Name; ports: Name[]; body: Statement[]; span: SourceSpan }
  | {
      kind: 'instance';
      name: Name;
      array: { variable: Name; from: Expr; to: Expr } | undefined;
      block: Name;
      ports: PinArg[];
      portsSpan: SourceSpan;
      overrides: Assignment[];
      span: SourceSpan;
    };

export interface DesignFile {
  file: string;
  statements: Statement[];
}
