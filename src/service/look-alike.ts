/**
 * Look-alike material slugs and display names. Two strings are look-alikes when their "skeletons" are equal, the
 * idea of Unicode Technical Standard #39 (Unicode Security Mechanisms, §4 Confusable Detection): map each
 * string to a prototype that erases differences a reader cannot see, then compare prototypes. The skeleton
 * here is NFKC (Unicode TR 15: width variants, ligatures, sub- and superscript digits, compatibility forms),
 * invisible format characters dropped, runs of white space as one space, then a table of confusables for the
 * characters that matter in material names: Cyrillic and Greek letters drawn like Latin ones, digits
 * drawn like letters (0/O, 1/l/I), dash variants, and the letter pairs rn/m and vv/w. The table is a
 * selection after TR 39's confusables data (from memory), not the whole file; lower-case Greek letters used as
 * symbols in this trade (α-, β-phases, μc-Si) keep their own identity.
 */

/** Prototype of each confusable character (TR 39 maps a character to the prototype it is drawn like). */
const PROTOTYPE = new Map<string, string>([
  // Cyrillic drawn like Latin
  ...pairs('АВЕКМНОРСТХЅІЈҮԚԜӀ', 'ABEKMHOPCTXSIJYQWl'),
  ...pairs('аеорсухѕіјԁһӏԛԝү', 'aeopcyxsijdhlqwy'),
  // Greek capitals drawn like Latin, and omicron
  ...pairs('ΑΒΕΖΗΙΚΜΝΟΡΤΥΧ', 'ABEZHIKMNOPTYX'),
  ['ο', 'o'],
  ['ϲ', 'c'],
  ['ϳ', 'j'],
  // digits and signs drawn like letters
  ['0', 'O'],
  ['1', 'l'],
  ['I', 'l'],
  ['|', 'l'],
  // dashes and minus signs drawn like a hyphen
  ...pairs('‐‑‒–—―−', '-------'),
]);

/** Letter pairs drawn like one letter (TR 39: "rn" like "m", "vv" like "w"). */
const SEQUENCES: [RegExp, string][] = [
  [/rn/g, 'm'],
  [/vv/g, 'w'],
];

function pairs(from: string, to: string): [string, string][] {
  const a = [...from];
  const b = [...to];
  return a.map((ch, i) => [ch, b[i]]);
}

/** The skeleton of a slug or display name (see the file comment), lower-cased: equal skeletons read alike. */
export function lookAlikeKey(text: string): string {
  const folded = text
    .normalize('NFKC')
    .replace(/\p{Cf}/gu, '')
    .replace(/\s+/gu, ' ')
    .trim();
  let skeleton = Array.from(folded, (ch) => PROTOTYPE.get(ch) ?? ch)
    .join('')
    .toLowerCase();
  for (const [pattern, prototype] of SEQUENCES) skeleton = skeleton.replace(pattern, prototype);
  return skeleton;
}

/**
 * Do `a` and `b` differ in a way a reader cannot see? True when their skeletons are equal but the texts are
 * not the same even ignoring case (identical names, or names differing only in case, are plainly what they are).
 */
export function hiddenLookAlike(a: string, b: string): boolean {
  return a.toLowerCase() !== b.toLowerCase() && lookAlikeKey(a) === lookAlikeKey(b);
}
