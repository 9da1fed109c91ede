/**
 * A tiny well-formedness checker for the report's markup (enough for the subset the report writes):
 * tags balance and nest, attribute values are quoted, text holds no raw `<` and every `&` starts an
 * entity. Returns the problems found (empty = well-formed).
 */
const VOID = new Set(['meta', 'br', 'hr', 'img', 'input', 'link']);

export function markupProblems(text: string): string[] {
  const problems: string[] = [];
  const stack: string[] = [];
  const tag = /<(\/?)([a-zA-Z][\w:-]*)((?:\s+[\w:-]+="[^"<]*")*)\s*(\/?)>/y;
  let i = 0;
  while (i < text.length) {
    const lt = text.indexOf('<', i);
    const chunk = lt < 0 ? text.slice(i) : text.slice(i, lt);
    const badAmp = /&(?!(?:amp|lt|gt|quot|#\d+);)/.exec(chunk);
    if (badAmp) problems.push(`bare & at ${i + badAmp.index}`);
    if (lt < 0) break;
    if (text.startsWith('<!DOCTYPE', lt)) { i = text.indexOf('>', lt) + 1; continue; }
    tag.lastIndex = lt;
    const m = tag.exec(text);
    if (!m) { problems.push(`malformed tag at ${lt}: ${text.slice(lt, lt + 60)}`); i = lt + 1; continue; }
    const [, close, name, , selfClose] = m;
    if (close) {
      const open = stack.pop();
      if (open !== name) problems.push(`</${name}> at ${lt} closes <${open ?? 'nothing'}>`);
    } else if (!selfClose && !VOID.has(name)) stack.push(name);
    i = lt + m[0].length;
  }
  if (stack.length) problems.push(`unclosed: ${stack.join(', ')}`);
  return problems;
}

/** Every <svg>...</svg> element of a document (non-nested). */
export function svgElements(html: string): string[] {
  return html.match(/<svg[\s\S]*?<\/svg>/g) ?? [];
}
