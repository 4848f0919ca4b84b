/** The kinds of token the lexer produces. */
export type TokenKind =
  | 'ident'
  | 'number'
  | 'string'
  | 'newline'
  | 'punct'
  | 'eof';

export interface Token {
  kind: TokenKind;
  /** The source text of the token (for strings: the decoded contents). */
  text: string;
  start: number;
  end: number;
  /** Number tokens: value before any unit, and the unit suffix text written against it. */
  numberValue?: number;
  suffix?: string;
}
