import { SNIPPET_CLOSE, SNIPPET_OPEN } from "../../../../shared/schemas/casebook";

export interface SnippetPart {
  text: string;
  mark: boolean;
}

/** Splits a search snippet at its match markers (U+0002 … U+0003) into plain and marked parts. */
export function snippetParts(snippet: string): SnippetPart[] {
  const out: SnippetPart[] = [];
  let buf = "";
  let mark = false;
  const flush = () => {
    if (buf) out.push({ text: buf, mark });
    buf = "";
  };
  for (const ch of snippet) {
    if (ch === SNIPPET_OPEN) {
      flush();
      mark = true;
    } else if (ch === SNIPPET_CLOSE) {
      flush();
      mark = false;
    } else buf += ch;
  }
  flush();
  return out;
}
