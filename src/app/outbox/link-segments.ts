/** A run of a plain-text mail body: either text, or a link with its address. */
interface Segment {
  text: string;
  href?: string;
}

// http(s) only: a mail body is untrusted text, and other schemes (javascript:) must not become links.
const url = /https?:\/\/[^\s<>"')\]]+/g;
// Sentence punctuation right after a link belongs to the sentence, not the address.
const trailing = /[.,;:!?]+$/;

/** Splits a plain-text body so the template can render its links as anchors, without innerHTML. */
export function linkSegments(text: string): Segment[] {
  const out: Segment[] = [];
  let last = 0;
  for (const match of text.matchAll(url)) {
    const start = match.index ?? 0;
    const href = match[0].replace(trailing, '');
    if (start > last) out.push({ text: text.slice(last, start) });
    out.push({ text: href, href });
    last = start + href.length;
  }
  if (last < text.length) out.push({ text: text.slice(last) });
  return out;
}
