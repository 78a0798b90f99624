// The diagnostic record every stage produces: parse errors, model errors and checks alike.
// Codes are stable strings users put in settings; the catalogue in checks/catalogue.ts holds
// their default severities and long explanations.
import type { Span } from './span';

export type Severity = 'error' | 'warning' | 'info';

export interface RelatedInfo {
  span: Span;
  message: string;
}

/** A suggested edit: replace the text in `span` by `newText`. */
export interface TextEdit {
  span: Span;
  newText: string;
}

export interface Fix {
  title: string;
  edits: TextEdit[];
  /** The fix most users want; editors may apply it with one key. */
  preferred?: boolean;
}

export interface Diagnostic {
  code: string;
  severity: Severity;
  span: Span;
  message: string;
  related?: RelatedInfo[];
  fixes?: Fix[];
}
