// Text edits that quick fixes offer, computed from spans and the source text.
import type { TextEdit } from '../text/diagnostic';
import type { Span } from '../text/span';
import type { Action, StepAlt } from '../model/types';

/**
 * Removes one action from a step line together with one separating comma, only when the text
 * between it and its neighbour is a comma and spaces (so a fix never deletes other text).
 */
export function removeActionEdit(text: string, alt: StepAlt, action: Action): TextEdit {
  const index = alt.actions.indexOf(action);
  const next = alt.actions[index + 1];
  const prev = alt.actions[index - 1];
  const onlySeparator = (from: number, to: number) => /^[\s,]*$/.test(text.slice(from, to)) && text.slice(from, to).split(',').length === 2;
  if (next && onlySeparator(action.span.end, next.span.start)) return { span: { start: action.span.start, end: next.span.start }, newText: '' };
  if (prev && onlySeparator(prev.span.end, action.span.start)) return { span: { start: prev.span.end, end: action.span.end }, newText: '' };
  return { span: action.span, newText: '' };
}

/** Removes whole lines covering a span, including the line break after them. */
export function removeLinesEdit(text: string, at: Span): TextEdit {
  let start = at.start;
  while (start > 0 && text[start - 1] !== '\n' && text[start - 1] !== '\r') start--;
  let end = at.end;
  while (end < text.length && text[end] !== '\n' && text[end] !== '\r') end++;
  if (text[end] === '\r') end++;
  if (text[end] === '\n') end++;
  return { span: { start, end }, newText: '' };
}
