/**
 * Minimal helpers to write SVG 1.1 as text: XML escaping, compact numbers and elements.
 * Pure functions, no DOM, no I/O.
 */

/** Characters XML 1.0 forbids even when escaped (C0 controls other than tab, LF, CR; lone surrogates; U+FFFE/FFFF). */
const XML_FORBIDDEN = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]|[\uD800-\uDBFF](?![\uDC00-\uDFFF])|(?<![\uD800-\uDBFF])[\uDC00-\uDFFF]/g;

const XML_ENTITIES: Record<string, string> = {
  '&': '&amp;',
  '<': '&lt;',
  '>': '&gt;',
  '"': '&quot;',
  "'": '&apos;',
};

/**
 * Escapes text for use in XML character data or a quoted attribute value.
 * Takes any string (labels come from user data); returns it with & < > " ' replaced by entities
 * and characters XML 1.0 cannot carry replaced by U+FFFD, so the document always parses.
 */
export function escapeXml(text: string): string {
  return text.replace(XML_FORBIDDEN, '\uFFFD').replace(/[&<>"']/g, (c) => XML_ENTITIES[c]);
}

/**
 * A coordinate rounded to 2 decimals, as short text ("12.5", "0", never "-0" or "NaN").
 * Takes a finite number; returns its text. Non-finite input is a caller bug and throws RangeError.
 */
export function num(value: number): string {
  if (!Number.isFinite(value)) throw new RangeError(`plot coordinate is not finite: ${value}`);
  const rounded = Math.round(value * 100) / 100;
  return rounded === 0 ? '0' : String(rounded);
}

/** Attribute values: strings are escaped, numbers rounded with num(); undefined/false attributes are left out. */
export type Attributes = Record<string, string | number | undefined | false>;

function attributeText(attributes: Attributes): string {
  let text = '';
  for (const [name, value] of Object.entries(attributes)) {
    if (value === undefined || value === false) continue;
    text += ` ${name}="${typeof value === 'number' ? num(value) : escapeXml(value)}"`;
  }
  return text;
}

/**
 * One SVG element as text. Takes the tag name, attributes and children (already-built element
 * strings, joined as they are); returns "<name a="…"/>" when there are no children, else
 * "<name a="…">children</name>".
 */
export function element(name: string, attributes: Attributes = {}, children: string[] = []): string {
  const open = `<${name}${attributeText(attributes)}`;
  return children.length === 0 ? `${open}/>` : `${open}>${children.join('')}</${name}>`;
}

/**
 * A <text> element. Takes attributes and the raw (unescaped) text; returns the element with the
 * text escaped.
 */
/**
 * A whole SVG file: the root element sized width × height px (viewBox in the same units), the plots' font and
 * default fill, each body part on a line of its own, preceded by the XML declaration.
 */
export function svgDocument(width: number, height: number, fontSizePx: number, body: string[]): string {
  const svg = element(
    'svg',
    {
      xmlns: 'http://www.w3.org/2000/svg',
      version: '1.1',
      width: String(width),
      height: String(height),
      viewBox: `0 0 ${width} ${height}`,
      'font-family': 'DejaVu Sans, Arial, Helvetica, sans-serif',
      'font-size': fontSizePx,
      fill: '#222222',
    },
    body.map((part) => `\n${part}`).concat('\n'),
  );
  return `<?xml version="1.0" encoding="UTF-8"?>\n${svg}\n`;
}

export function textElement(attributes: Attributes, text: string): string {
  return `<text${attributeText(attributes)}>${escapeXml(text)}</text>`;
}

/**
 * The "points" attribute of a <polyline>: "x,y x,y …". Takes pixel coordinates; returns the text.
 */
export function pointsAttribute(points: Array<[number, number]>): string {
  return points.map(([x, y]) => `${num(x)},${num(y)}`).join(' ');
}

/**
 * Width per character in em, for the plots' font (DejaVu Sans first, then Arial/Helvetica). Measured with
 * rsvg-convert and DejaVu Sans on titles, file names, refs and numbers (`python3 scripts/measure-text-width.py`):
 * 0.50–0.59 em regular, 0.56–0.65 em bold (digits advance 0.636 em regular, 0.696 em bold; Arial's digits 0.556 em).
 * 0.6 and 0.68 hold for such text; runs of capitals, m or W (up to 1 em) are the exception.
 */
export const GLYPH_EM = { regular: 0.6, bold: 0.68 } as const;

/**
 * An estimate of the rendered width of text, for layout without a font engine.
 * Takes the text, the font size in px and the weight; returns the width in px (code points × GLYPH_EM × size).
 */
export function estimateTextWidth(text: string, fontSizePx: number, weight: keyof typeof GLYPH_EM = 'regular'): number {
  return [...text].length * GLYPH_EM[weight] * fontSizePx;
}

/**
 * Shortens text to fit maxWidthPx by cutting out its middle ("data/marrowick/ito-sp…ed.tsv"): the start and
 * the end of a file name or ref are the parts that tell them apart. Returns the text unchanged when it fits.
 */
export function shortenMiddle(text: string, maxWidthPx: number, fontSizePx: number, weight: keyof typeof GLYPH_EM = 'regular'): string {
  const chars = [...text];
  const fits = Math.floor(maxWidthPx / (GLYPH_EM[weight] * fontSizePx));
  if (chars.length <= fits) return text;
  if (fits <= 1) return '…';
  const keep = fits - 1;
  const head = Math.ceil(keep / 2);
  return `${chars.slice(0, head).join('')}…${chars.slice(chars.length - (keep - head)).join('')}`;
}

/**
 * Breaks text into at most maxLines lines that each fit maxWidthPx by the estimate above: after a colon when
 * that works ("check of FILE:" / "consistent (…)"), else greedily at spaces; a word too long for a line is
 * shortened in its middle, and the last line too when the text needs more lines. Returns at least one line.
 */
export function wrapText(
  text: string,
  maxWidthPx: number,
  fontSizePx: number,
  maxLines: number,
  weight: keyof typeof GLYPH_EM = 'regular',
): string[] {
  const greedy = wrapGreedy(text, maxWidthPx, fontSizePx, maxLines, weight);
  if (greedy.length === 1 || maxLines < 2) return greedy;
  const words = text.split(' ').filter((w) => w !== '');
  for (let i = words.length - 1; i > 0; i--) {
    if (!words[i - 1].endsWith(':')) continue;
    const head = words.slice(0, i).join(' ');
    const tail = wrapGreedy(words.slice(i).join(' '), maxWidthPx, fontSizePx, maxLines - 1, weight);
    const whole = (line: string) => !line.includes('…');
    if (estimateTextWidth(head, fontSizePx, weight) <= maxWidthPx && tail.every(whole) && greedy.every(whole)) return [head, ...tail];
  }
  return greedy;
}

function wrapGreedy(text: string, maxWidthPx: number, fontSizePx: number, maxLines: number, weight: keyof typeof GLYPH_EM = 'regular'): string[] {
  const fits = (line: string) => estimateTextWidth(line, fontSizePx, weight) <= maxWidthPx;
  const lines: string[] = [];
  let current = '';
  const words = text.split(' ').filter((w) => w !== '');
  for (let i = 0; i < words.length; i++) {
    const candidate = current === '' ? words[i] : `${current} ${words[i]}`;
    if (fits(candidate)) {
      current = candidate;
      continue;
    }
    if (lines.length === maxLines - 1) {
      // the last line allowed: the rest of the text, shortened in the middle below
      current = [current, ...words.slice(i)].filter((w) => w !== '').join(' ');
      break;
    }
    if (current !== '') lines.push(current);
    current = fits(words[i]) ? words[i] : shortenMiddle(words[i], maxWidthPx, fontSizePx, weight);
  }
  lines.push(shortenMiddle(current, maxWidthPx, fontSizePx, weight));
  return lines;
}
