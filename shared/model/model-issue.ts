/** One validation problem, tagged with the field it concerns. */
export interface ModelIssue {
  /** Path into the document, e.g. ['leads', 1, 'start']. */
  path: (string | number)[];
  message: string;
}

/** 'leads[1].start' style text for a path. */
export function formatIssuePath(path: readonly (string | number)[]): string {
  let out = '';
  for (const p of path) out += typeof p === 'number' ? `[${p}]` : out ? `.${p}` : p;
  return out || '(document)';
}
