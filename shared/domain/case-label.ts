/** How a case is named in mails, notices, receipts and lists. */

export interface LabelledCase {
  id: string;
  title: string | null;
  year: number | null;
  make: string | null;
  model: string | null;
  complaint: string | null;
}

/** Its title, or the vehicle and the start of the complaint, or "Case <id>". */
export function caseLabel(c: LabelledCase): string {
  if (c.title) return c.title;
  const vehicle = [c.year, c.make, c.model].filter(Boolean).join(" ");
  const complaint = c.complaint ? shortened(c.complaint, 60) : "";
  return [vehicle, complaint].filter(Boolean).join(" — ") || `Case ${c.id.slice(0, 8)}`;
}

/** At most `max` characters, cut at a word with an ellipsis (not in the middle of a word). */
function shortened(s: string, max: number): string {
  const t = s.replace(/\s+/g, " ").trim();
  if (t.length <= max) return t;
  const cut = t.slice(0, max - 1).replace(/[\s,;:.—-]+\S*$/, "");
  return `${cut || t.slice(0, max - 1)}…`;
}
