/**
 * What a file is, judged by its first bytes — never by its name or the Content-Type a client sent.
 * Signatures (from memory, as published in each format's specification):
 * - JPEG: FF D8 FF (SOI marker followed by the next marker's FF) — ITU-T T.81 Annex B.
 * - PNG: 89 50 4E 47 0D 0A 1A 0A — PNG specification (W3C / ISO 15948), section 5.2.
 * - WebP: "RIFF" <4-byte size> "WEBP" — RFC 9649 section 2.
 */
export type ImageMime = "image/jpeg" | "image/png" | "image/webp";

/** Bytes needed to recognise an image. */
export const IMAGE_SNIFF_BYTES = 12;

export function detectImageType(head: Uint8Array): ImageMime | null {
  if (head.length >= 3 && head[0] === 0xff && head[1] === 0xd8 && head[2] === 0xff) return "image/jpeg";
  const png = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a];
  if (head.length >= 8 && png.every((b, i) => head[i] === b)) return "image/png";
  if (head.length >= 12 && ascii(head, 0, 4) === "RIFF" && ascii(head, 8, 12) === "WEBP") return "image/webp";
  return null;
}

export const imageExtensions: Record<ImageMime, string> = {
  "image/jpeg": "jpg",
  "image/png": "png",
  "image/webp": "webp",
};

/** Bytes looked at to decide whether an upload is text. */
export const TEXT_SNIFF_BYTES = 8192;

/** Well-known binary containers, named in the refusal so the tech knows what they picked. */
const binarySignatures: { name: string; bytes: number[] }[] = [
  { name: "a PNG image", bytes: [0x89, 0x50, 0x4e, 0x47] },
  { name: "a JPEG image", bytes: [0xff, 0xd8, 0xff] },
  { name: "a GIF image", bytes: [0x47, 0x49, 0x46, 0x38] },
  { name: "a RIFF file (WebP image or WAV audio)", bytes: [0x52, 0x49, 0x46, 0x46] },
  { name: "a ZIP archive (or an office document)", bytes: [0x50, 0x4b, 0x03, 0x04] },
  { name: "a ZIP archive (empty)", bytes: [0x50, 0x4b, 0x05, 0x06] },
  { name: "a gzip archive", bytes: [0x1f, 0x8b] },
  { name: "a 7-Zip archive", bytes: [0x37, 0x7a, 0xbc, 0xaf, 0x27, 0x1c] },
  { name: "an xz archive", bytes: [0xfd, 0x37, 0x7a, 0x58, 0x5a, 0x00] },
  { name: "a PDF document", bytes: [0x25, 0x50, 0x44, 0x46, 0x2d] },
  { name: "a program (ELF)", bytes: [0x7f, 0x45, 0x4c, 0x46] },
  { name: "an old office document", bytes: [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1] },
  { name: "a SQLite database", bytes: [0x53, 0x51, 0x4c, 0x69, 0x74, 0x65, 0x20, 0x66] },
];

export type TextCheck = { ok: true } | { ok: false; reason: string };

/**
 * Whether the start of a file looks like CSV/TSV text: no known binary signature, no NUL bytes and
 * no control characters other than tab, line feed, form feed and carriage return. UTF-8 (with or
 * without a byte-order mark) and single-byte encodings pass; UTF-16 is refused with advice.
 */
export function checkTextStart(head: Uint8Array): TextCheck {
  if (head.length === 0) return { ok: true }; // the parser refuses an empty file with its own message
  for (const sig of binarySignatures) {
    if (head.length >= sig.bytes.length && sig.bytes.every((b, i) => head[i] === b)) {
      return { ok: false, reason: `This file is ${sig.name}, not CSV or TSV text.` };
    }
  }
  if (head.length >= 2 && ((head[0] === 0xff && head[1] === 0xfe) || (head[0] === 0xfe && head[1] === 0xff))) {
    return {
      ok: false,
      reason: "This file is UTF-16 text; export the capture as CSV in UTF-8 (or plain ASCII) and upload it again.",
    };
  }
  for (let i = 0; i < head.length; i++) {
    const b = head[i];
    if (b < 0x20 && b !== 0x09 && b !== 0x0a && b !== 0x0c && b !== 0x0d) {
      return {
        ok: false,
        reason: `This file is not CSV or TSV text (binary byte 0x${b.toString(16).padStart(2, "0")} at offset ${i}).`,
      };
    }
  }
  return { ok: true };
}

function ascii(b: Uint8Array, from: number, to: number): string {
  let s = "";
  for (let i = from; i < to; i++) s += String.fromCharCode(b[i]);
  return s;
}
