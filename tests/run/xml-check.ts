/** Minimal XML well-formedness check: balanced tags, quoted attributes, only the five entities. */
export function wellFormed(xml: string): boolean {
  const body = xml.replace(/^<\?xml[^?]*\?>\s*/, '');
  const stack: string[] = [];
  const re = /<(\/?)([A-Za-z_][\w.-]*)((?:\s+[\w:.-]+="[^"<]*")*)\s*(\/?)>|([^<]+)/gy;
  let m: RegExpExecArray | null;
  let pos = 0;
  while ((m = re.exec(body)) !== null) {
    pos = re.lastIndex;
    if (m[5] !== undefined) {
      if (/&(?!(amp|lt|gt|quot|apos);)/.test(m[5])) return false;
      continue;
    }
    if (m[1]) { if (stack.pop() !== m[2]) return false; } else if (!m[4]) stack.push(m[2]);
  }
  return pos === body.length && stack.length === 0;
}
