/**
 * Scrubbing free text before a case is published to the casebook. Pure, browser-safe.
 *
 * What is removed:
 * - e-mail addresses (the usual local@domain.tld shape, simplified from RFC 5322 §3.4.1);
 * - telephone numbers in the common written forms: international "+CC …" (ITU-T E.123 notation,
 *   at most 15 digits per ITU-T E.164), "(area) number", North American 3-3-4 groups, national
 *   numbers with a leading trunk 0 (e.g. "020 7946 0958", "07700 900123"), local 3-4 groups;
 * - the names the caller knows (the shop's members, the expert, anybody else on the case), their
 *   parts, and the shop's name and its distinctive words;
 * - capitalised given names from a built-in list (names that are also ordinary words of the
 *   trade or of English, such as Mark, Will or Jack, are left out of the list on purpose), and any
 *   word after an honorific (Mr, Mrs, Ms, Dr …);
 * - a VIN: the whole 17 characters are cut to the model part (positions 1–8, 10, 11 — never the
 *   serial, 12–17, nor the check digit that depends on it; 49 CFR 565.15), and the case's own
 *   serial is removed wherever it appears;
 * - control characters (so stored text can never carry the search-snippet markers).
 */

export const REDACTED = {
  email: "[e-mail]",
  phone: "[phone]",
  name: "[name]",
  shop: "[shop]",
  serial: "[serial]",
} as const;

export interface ScrubContext {
  /** full names of people on the case: shop members, the expert, anybody named in it */
  names?: readonly (string | null | undefined)[];
  /** organisations to remove: the shop's name */
  organisations?: readonly (string | null | undefined)[];
  /** e-mail addresses known to belong to the people (their local parts are removed as words too) */
  emails?: readonly (string | null | undefined)[];
  /** the case's VIN: its serial is removed wherever it appears */
  vin?: string | null;
  /** the given-names list applied to capitalised words; false to skip it */
  givenNames?: readonly string[] | false;
}

/**
 * Common given names (English-speaking and European usage, from memory). Deliberately without
 * names that are also ordinary words in a workshop or in English text (Mark, Will, Bill, Jack,
 * Max, Pat, Rod, Gene, Ray, Grant, Chase, Miles, Dean, Frank, Lance, Cliff, Dale, Glen, Rich,
 * Sandy, Joy, Hope, Grace, Rose, Carter, Mason, Hunter, Parker, Cooper, Victor, Earl, Art, Wade,
 * Chip, Skip, Van, Amber, April, May, June, Summer, Faith, Iris, Ivy, Ruby, Pearl, Dawn, Sky…).
 */
export const GIVEN_NAMES: readonly string[] = [
  "Aaron",
  "Abigail",
  "Adam",
  "Adrian",
  "Agnes",
  "Ahmed",
  "Aidan",
  "Aisha",
  "Alan",
  "Albert",
  "Alberto",
  "Alejandro",
  "Alex",
  "Alexander",
  "Alexandra",
  "Alfred",
  "Ali",
  "Alice",
  "Alicia",
  "Alison",
  "Allison",
  "Amanda",
  "Amelia",
  "Amy",
  "Ana",
  "Andrea",
  "Andreas",
  "Andrew",
  "Andy",
  "Angela",
  "Anita",
  "Ann",
  "Anna",
  "Anne",
  "Annie",
  "Anthony",
  "Antonio",
  "Arthur",
  "Ashley",
  "Barbara",
  "Beatrice",
  "Becky",
  "Ben",
  "Benjamin",
  "Bernard",
  "Beth",
  "Betty",
  "Beverly",
  "Bob",
  "Bobby",
  "Brandon",
  "Brenda",
  "Brian",
  "Bruce",
  "Bryan",
  "Caroline",
  "Carl",
  "Carla",
  "Carlos",
  "Carmen",
  "Carol",
  "Catherine",
  "Charles",
  "Charlie",
  "Charlotte",
  "Chloe",
  "Chris",
  "Christian",
  "Christina",
  "Christine",
  "Christopher",
  "Claire",
  "Clara",
  "Craig",
  "Cynthia",
  "Daniel",
  "Daniela",
  "Danny",
  "David",
  "Debbie",
  "Deborah",
  "Denise",
  "Dennis",
  "Diana",
  "Diane",
  "Diego",
  "Dimitri",
  "Dominic",
  "Donald",
  "Donna",
  "Doris",
  "Dorothy",
  "Douglas",
  "Dylan",
  "Edward",
  "Eleanor",
  "Elena",
  "Elizabeth",
  "Ella",
  "Ellen",
  "Emily",
  "Emma",
  "Eric",
  "Erik",
  "Ethan",
  "Eva",
  "Evelyn",
  "Fatima",
  "Felix",
  "Fernando",
  "Fiona",
  "Francesca",
  "Francis",
  "Francisco",
  "Gary",
  "George",
  "Georgia",
  "Gerald",
  "Gloria",
  "Gordon",
  "Gregory",
  "Hannah",
  "Harold",
  "Harry",
  "Heather",
  "Helen",
  "Henry",
  "Hugo",
  "Ian",
  "Isaac",
  "Isabel",
  "Isabella",
  "Ivan",
  "Jacob",
  "James",
  "Jamie",
  "Jane",
  "Janet",
  "Jason",
  "Javier",
  "Jean",
  "Jeff",
  "Jeffrey",
  "Jennifer",
  "Jenny",
  "Jeremy",
  "Jessica",
  "Joan",
  "Joanna",
  "Joe",
  "Joel",
  "John",
  "Johnny",
  "Jonathan",
  "Jorge",
  "Jose",
  "Joseph",
  "Joshua",
  "Juan",
  "Judith",
  "Judy",
  "Julia",
  "Julian",
  "Julie",
  "Justin",
  "Karen",
  "Karl",
  "Kate",
  "Katherine",
  "Kathleen",
  "Kathy",
  "Katie",
  "Keith",
  "Kelly",
  "Kenneth",
  "Kevin",
  "Kim",
  "Kimberly",
  "Klaus",
  "Larry",
  "Laura",
  "Lauren",
  "Leo",
  "Leon",
  "Linda",
  "Lisa",
  "Liam",
  "Lily",
  "Lucas",
  "Lucy",
  "Luis",
  "Luke",
  "Maria",
  "Marie",
  "Marco",
  "Margaret",
  "Maria",
  "Marilyn",
  "Mario",
  "Martha",
  "Martin",
  "Mary",
  "Matthew",
  "Megan",
  "Melissa",
  "Michael",
  "Michelle",
  "Miguel",
  "Mike",
  "Mohammed",
  "Muhammad",
  "Monica",
  "Nancy",
  "Natalie",
  "Nathan",
  "Nicholas",
  "Nicole",
  "Noah",
  "Oliver",
  "Olivia",
  "Omar",
  "Oscar",
  "Pablo",
  "Pamela",
  "Patricia",
  "Patrick",
  "Paul",
  "Paula",
  "Pedro",
  "Peter",
  "Philip",
  "Phillip",
  "Rachel",
  "Rafael",
  "Raymond",
  "Rebecca",
  "Richard",
  "Robert",
  "Roberto",
  "Robin",
  "Roger",
  "Ronald",
  "Ruth",
  "Ryan",
  "Samantha",
  "Samuel",
  "Sandra",
  "Sara",
  "Sarah",
  "Scott",
  "Sean",
  "Sebastian",
  "Sergio",
  "Sharon",
  "Shirley",
  "Simon",
  "Sofia",
  "Sophia",
  "Sophie",
  "Stefan",
  "Stephanie",
  "Stephen",
  "Steve",
  "Steven",
  "Susan",
  "Tamara",
  "Teresa",
  "Thomas",
  "Timothy",
  "Tina",
  "Todd",
  "Tom",
  "Tommy",
  "Tony",
  "Tracy",
  "Valerie",
  "Vanessa",
  "Vincent",
  "Virginia",
  "Walter",
  "Wayne",
  "William",
  "Yusuf",
  "Zachary",
  "Zoe",
];

/**
 * Ordinary words (English and the trade's): a part of a known person's or shop's name that is one
 * of these is removed only where it is written with a capital inside a sentence, so that a member
 * called "Long" or a shop called "Spark Plug Garage" does not wipe out "long crank" or "spark plug".
 */
const COMMON_WORDS = new Set(
  (
    "a an and the of in on at to for by with from or as is it be are was not no yes our my your his her their this that " +
    "long short young old new good best king wood stone street hill field brook green white black brown gray grey gold " +
    "may will mark bill jack max pat rod gene ray grant chase miles dean frank lance cliff dale glen rich sandy joy hope " +
    "grace rose carter mason hunter parker cooper victor earl art wade chip skip van amber april june summer faith ivy " +
    "coil plug spark gap lead boot wire fuel air oil cam crank valve pump belt chain gear sensor idle load burn fire line " +
    "auto autos car cars motor motors motorworks garage garages repair repairs service services shop works workshop center " +
    "centre automotive diagnostics diagnostic tyre tyres tire tires engine engines mechanic mechanics bay lane road ltd llc " +
    "inc co company group brothers bros sons family north south east west city town county " +
    "ignition electric electrical electrics injection tuning performance precision express quick fast pro master " +
    "expert experts solutions clinic doctor tech technik werks mobile care point house hub spares parts battery " +
    "batteries exhaust brakes brake clutch transmission body paint diesel petrol gas station"
  ).split(/\s+/),
);

/**
 * The trade's own words (and the usual role mailboxes of a shop: tech@, owner@, service@…). An
 * e-mail local part or a part of one that is one of these is not a name: it is never scrubbed
 * from the text. A person's name part that is one of these is removed only where it is
 * capitalised inside a sentence, as for COMMON_WORDS.
 */
export const TRADE_WORDS: readonly string[] = (
  "tech techs technician technicians owner owners admin desk office info contact support hello mail team staff " +
  "front counter sales parts service workshop garage shop foreman manager advisor writer apprentice " +
  "coil coils plug plugs spark sparks misfire misfires misfiring injector injectors sensor sensors wire wires " +
  "wiring harness boot boots ground grounds earth scope scopes dwell burn burns firing fire line lines trigger " +
  "probe probes lead leads clamp amp amps volt volts voltage current primary secondary kv ohm ohms meter " +
  "relay fuse fuses connector connectors pin pins terminal terminals module modules ecu pcm ecm " +
  "battery alternator starter crank cranking cam camshaft crankshaft timing valve valves piston pistons " +
  "compression vacuum leak leaks pressure rail pump pumps regulator filter throttle idle load rpm " +
  "exhaust intake manifold catalyst lambda oxygen knock tps map maf egr evap purge canister " +
  "signal pattern waveform trace traces capture captures cylinder cylinders bank code codes fault faults " +
  "open short resistance insulation tracking carbon oil coolant fuel air gap ringing oscillation " +
  "diagnosis repair repairs fix fixed test tests check checks recheck swap swapped replace replaced new old"
).split(/\s+/);

const ORDINARY_WORDS = new Set([...COMMON_WORDS, ...TRADE_WORDS]);

/** Words of an organisation's name that carry no identity on their own (they stay in the text). */
const GENERIC_BUSINESS_WORDS = ORDINARY_WORDS;

const HONORIFICS = "Mr|Mrs|Ms|Miss|Mx|Dr|Sir|Madam|Mme|Mlle|Herr|Frau|Sr|Sra";

/** Letters as JavaScript sees word characters, plus the letters of most European names. */
const L = "A-Za-zÀ-ÖØ-öø-ÿĀ-ſ";
const WORD_BEFORE = `(?<![${L}0-9_])`;
const WORD_AFTER = `(?![${L}0-9_])`;

function escapeRegExp(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");
}

/** Simplified RFC 5322 addr-spec: dot-atom local part, a domain with at least one dot. */
export const EMAIL_RE =
  /[A-Za-z0-9!#$%&'*+/=?^_`{|}~-]+(?:\.[A-Za-z0-9!#$%&'*+/=?^_`{|}~-]+)*@(?:[A-Za-z0-9](?:[A-Za-z0-9-]*[A-Za-z0-9])?\.)+[A-Za-z]{2,}/g;

/** The written forms of a telephone number (see the file comment); each match is checked for 7–15 digits. */
const PHONE_RES: RegExp[] = [
  // international, E.123: +44 20 7946 0958, +1-202-555-0143, +49 (0)30 1234567, +33 1 23 45 67 89
  /\+\d{1,3}(?:[ ./-]?\(?\d{1,5}\)?){1,6}(?![0-9])/g,
  // 00 international prefix: 0044 20 7946 0958, 0049 30 1234567
  /(?<![0-9.,])00[1-9]\d{0,2}(?:[ ./-]?\(?\d{1,5}\)?){2,6}(?![0-9])/g,
  // (area) number: (202) 555-0143, (020) 7946 0958, (0171) 4960000
  /\(\d{2,5}\)[ .-]?\d{3,4}(?:[ .-]?\d{2,4}){1,2}(?![0-9])/g,
  // North American 3-3-4 groups (area code and exchange start with 2–9): 202-555-0143,
  // 202.555.0143, 202 555 0143, 1-800-555-0199
  /(?<![0-9.,])(?:1[ .-])?[2-9]\d{2}[ .-][2-9]\d{2}[ .-]\d{4}(?![0-9])/g,
  // national with trunk 0: 020 7946 0958, 07700 900123, 030 1234567, 0171-496-0000
  /(?<![0-9.,])0\d{1,4}[ ./-]\d{3,4}(?:[ .-]?\d{3,4})(?![0-9.,]\d)(?![0-9])/g,
  // an unbroken run of 10–13 digits (a phone number written without spaces)
  /(?<![0-9.,])\d{10,13}(?![0-9.,]?\d)/g,
  // local 3-4 after a word that says it is a number: "call 555-0143", "tel. 555 0143" (bare, it
  // would also match ranges such as "800-3000 rpm")
  /(?<=(?:phone|tel|telephone|call|ring|mobile|cell|text|fax|ph|number|no)\.?[:#]?\s{0,3})\d{3}[-. ]\d{4}(?![0-9.,-]?\d)/gi,
];

function digitsIn(s: string): number {
  let n = 0;
  for (let i = 0; i < s.length; i++) if (s.charCodeAt(i) >= 48 && s.charCodeAt(i) <= 57) n++;
  return n;
}

/** Replaces every telephone number in `text`. */
export function scrubPhones(text: string, replacement: string = REDACTED.phone): string {
  let out = text;
  for (const re of PHONE_RES) {
    out = out.replace(re, (m) => {
      const d = digitsIn(m);
      return d >= 7 && d <= 15 ? replacement : m;
    });
  }
  return out;
}

export function scrubEmails(text: string, replacement: string = REDACTED.email): string {
  return text.replace(EMAIL_RE, replacement);
}

/** A 17-character VIN shape (no I, O, Q) with at least two digits and two letters. */
const VIN_RE = /(?<![A-Za-z0-9])[A-HJ-NPR-Za-hj-npr-z0-9]{17}(?![A-Za-z0-9])/g;

/**
 * The VIN as published: the model part (positions 1–8, 10, 11) with the check digit and the
 * serial masked, e.g. "1M8GDM9A*KP******". Returns null for anything that is not 17 VIN characters.
 */
export function maskVin(vin: string | null | undefined): string | null {
  if (!vin) return null;
  const v = vin.trim().toUpperCase();
  if (!/^[A-HJ-NPR-Z0-9]{17}$/.test(v)) return null;
  return v.slice(0, 8) + "*" + v.slice(9, 11) + "******";
}

export function scrubVins(text: string, vin?: string | null): string {
  let out = text.replace(VIN_RE, (m) => {
    const letters = (m.match(/[A-Za-z]/g) ?? []).length;
    const digits = (m.match(/[0-9]/g) ?? []).length;
    return letters >= 2 && digits >= 2 ? (maskVin(m) ?? m) : m;
  });
  const v = (vin ?? "").trim().toUpperCase();
  if (v.length === 17) {
    const serial = v.slice(11, 17);
    out = out.replace(new RegExp(escapeRegExp(serial), "gi"), REDACTED.serial);
  }
  return out;
}

/** Removes control characters (keeps tab and newline) and the snippet markers U+0002/U+0003. */
export function stripControls(text: string): string {
  // eslint-disable-next-line no-control-regex -- removing control characters is what this does
  return text.replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F\u200B-\u200F\u2028\u2029\uFEFF]/g, "");
}

interface NamePattern {
  re: RegExp;
  replacement: string;
}

function wordPattern(word: string, flags: string): RegExp {
  return new RegExp(`${WORD_BEFORE}${escapeRegExp(word).replace(/\s+/g, "[\\s.\\-]+")}${WORD_AFTER}(?:['’]s)?`, flags);
}

/** A capitalised occurrence that does not start a sentence (for common-word name parts). */
function capitalisedInside(word: string): RegExp {
  const cap = word[0].toUpperCase() + word.slice(1).toLowerCase();
  return new RegExp(
    `(?<=[${L}0-9,;:)]\\s+)(?:${escapeRegExp(cap)}|${escapeRegExp(word.toUpperCase())})${WORD_AFTER}(?:['’]s)?`,
    "g",
  );
}

function namePatterns(ctx: ScrubContext): NamePattern[] {
  const pats: NamePattern[] = [];
  const seen = new Set<string>();
  const add = (key: string, p: NamePattern) => {
    if (seen.has(key)) return;
    seen.add(key);
    pats.push(p);
  };
  const full = (s: string, replacement: string) =>
    add(`full:${s.toLowerCase()}`, { re: wordPattern(s, "gi"), replacement });
  const part = (w: string, replacement: string, generic: Set<string>) => {
    const lw = w.toLowerCase();
    if (lw.length < 2 || /^\d+$/.test(lw)) return;
    if (generic.has(lw)) add(`cap:${lw}`, { re: capitalisedInside(w), replacement });
    else if (lw.length <= 2) add(`case:${lw}`, { re: wordPattern(w[0].toUpperCase() + w.slice(1), "g"), replacement });
    else add(`part:${lw}`, { re: wordPattern(w, "gi"), replacement });
  };
  const orgs = (ctx.organisations ?? []).map((s) => (s ?? "").trim()).filter(Boolean);
  const names = (ctx.names ?? []).map((s) => (s ?? "").trim()).filter(Boolean);
  // longest first, so "Harrowvale Motor Bay" goes before "Harrowvale"
  for (const o of [...orgs].sort((a, b) => b.length - a.length)) full(o, REDACTED.shop);
  for (const n of [...names].sort((a, b) => b.length - a.length)) full(n, REDACTED.name);
  for (const o of orgs)
    for (const w of o.split(/[^A-Za-zÀ-ÖØ-öø-ÿĀ-ſ0-9'’]+/).filter(Boolean))
      part(w, REDACTED.shop, GENERIC_BUSINESS_WORDS);
  for (const n of names)
    for (const w of n.split(/[^A-Za-zÀ-ÖØ-öø-ÿĀ-ſ'’-]+/).filter(Boolean)) part(w, REDACTED.name, ORDINARY_WORDS);
  for (const e of ctx.emails ?? []) {
    const local = (e ?? "").split("@")[0]?.trim();
    if (!local || local.length < 3) continue;
    // An address's local part is a name only where it is not a word: "d.whitlock" and "whitlock" go,
    // "tech" (tech@…) or "service" stay — scrubbing them would cut the trade's words out of the text.
    const words = local.split(/[._+\-0-9]+/).filter((x) => x.length >= 3);
    const compound = /[._+\-0-9]/.test(local);
    if (compound) add(`local:${local.toLowerCase()}`, { re: wordPattern(local, "gi"), replacement: REDACTED.name });
    for (const w of words) if (!ORDINARY_WORDS.has(w.toLowerCase())) part(w, REDACTED.name, ORDINARY_WORDS);
  }
  return pats;
}

const HONORIFIC_RE = new RegExp(
  `${WORD_BEFORE}(?:${HONORIFICS})\\.?\\s+[A-ZÀ-ÖØ-Þ][${L}'’\\-]+(?:\\s+[A-ZÀ-ÖØ-Þ][${L}'’\\-]+)?`,
  "g",
);

let givenNamesRe: RegExp | null = null;
function givenNamesPattern(list: readonly string[]): RegExp {
  if (list === GIVEN_NAMES && givenNamesRe) return givenNamesRe;
  const alt = [...new Set(list)]
    .sort((a, b) => b.length - a.length)
    .map(escapeRegExp)
    .join("|");
  const re = new RegExp(`${WORD_BEFORE}(?:${alt})${WORD_AFTER}(?:['’]s)?`, "g");
  if (list === GIVEN_NAMES) givenNamesRe = re;
  return re;
}

/**
 * Scrubs one piece of free text for publishing. Order matters: e-mail addresses first (they hold
 * names and digits), then VINs (17 characters that could look like anything), phone numbers,
 * known names and the shop, honorific + name, then the given-names list.
 */
export function scrubText(text: string | null | undefined, ctx: ScrubContext = {}): string {
  if (!text) return "";
  let out = stripControls(String(text));
  out = scrubEmails(out);
  out = scrubVins(out, ctx.vin);
  out = scrubPhones(out);
  for (const p of namePatterns(ctx)) out = out.replace(p.re, p.replacement);
  out = out.replace(HONORIFIC_RE, REDACTED.name);
  if (ctx.givenNames !== false) out = out.replace(givenNamesPattern(ctx.givenNames ?? GIVEN_NAMES), REDACTED.name);
  // "[name] [name]" → "[name]"
  out = out
    .replace(/\[name\](?:[\s.,]+\[name\])+/g, REDACTED.name)
    .replace(/\[shop\](?:[\s.,]+\[shop\])+/g, REDACTED.shop);
  return out;
}

/** Scrubs every string inside a JSON-like value (objects, arrays), leaving numbers and booleans. */
export function scrubDeep<T>(value: T, ctx: ScrubContext): T {
  if (typeof value === "string") return scrubText(value, ctx) as T;
  if (Array.isArray(value)) return value.map((v) => scrubDeep(v, ctx)) as T;
  if (value && typeof value === "object") {
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(value)) out[k] = scrubDeep(v, ctx);
    return out as T;
  }
  return value;
}
