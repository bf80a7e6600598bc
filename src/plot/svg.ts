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
export function textElement(attributes: Attributes, text: string): string {
  return `<text${attributeText(attributes)}>${escapeXml(text)}</text>`;
}

/**
 * The "points" attribute of a <polyline>: "x,y x,y …". Takes pixel coordinates; returns the text.
 */
export function pointsAttribute(points: Array<[number, number]>): string {
  return points.map(([x, y]) => `${num(x)},${num(y)}`).join(' ');
}

/** Average advance of a sans-serif glyph in em (digits are 0.556 em in Helvetica/Arial; 0.6 leaves a margin). */
const AVERAGE_GLYPH_EM = 0.6;

/**
 * A conservative estimate of the rendered width of text, for layout without a font engine.
 * Takes the text and the font size in px; returns the width in px.
 */
export function estimateTextWidth(text: string, fontSizePx: number): number {
  return [...text].length * AVERAGE_GLYPH_EM * fontSizePx;
}
