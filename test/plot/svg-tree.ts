/**
 * Test helper: parses SVG text with fast-xml-parser into a small tree and finds elements by
 * tag and class, so the plot tests read like DOM queries.
 */
import { XMLParser, XMLValidator } from 'fast-xml-parser';

export interface SvgNode {
  tag: string;
  attrs: Record<string, string>;
  children: SvgNode[];
  /** Concatenated text content of this node and its descendants (entities decoded). */
  text: string;
}

const parser = new XMLParser({
  preserveOrder: true,
  ignoreAttributes: false,
  attributeNamePrefix: '',
  parseAttributeValue: false,
  parseTagValue: false,
  trimValues: false,
  processEntities: true,
});

type Raw = Record<string, unknown>;

function toNode(raw: Raw): SvgNode | string {
  if ('#text' in raw) return String(raw['#text']);
  const tag = Object.keys(raw).find((key) => key !== ':@')!;
  const items = (raw[tag] as Raw[]).map(toNode);
  const children = items.filter((c): c is SvgNode => typeof c !== 'string');
  const text = items.map((c) => (typeof c === 'string' ? c : c.text)).join('');
  return { tag, attrs: (raw[':@'] as Record<string, string>) ?? {}, children, text };
}

/** Validates the document (throws with the parser's message if malformed) and returns the <svg> root. */
export function parseSvg(svg: string): SvgNode {
  const valid = XMLValidator.validate(svg);
  if (valid !== true) throw new Error(`malformed SVG: ${JSON.stringify(valid.err)}`);
  const nodes = (parser.parse(svg) as Raw[]).map(toNode).filter((n): n is SvgNode => typeof n !== 'string');
  const root = nodes.find((n) => n.tag === 'svg');
  if (!root) throw new Error('no <svg> root element');
  return root;
}

/** All descendants (depth first, document order) matching a tag and optionally a class. */
export function findAll(node: SvgNode, tag: string, className?: string): SvgNode[] {
  const found: SvgNode[] = [];
  const visit = (n: SvgNode) => {
    for (const child of n.children) {
      const classes = (child.attrs.class ?? '').split(/\s+/);
      if (child.tag === tag && (className === undefined || classes.includes(className))) found.push(child);
      visit(child);
    }
  };
  visit(node);
  return found;
}

/** The "x,y x,y" points of a <polyline> as numbers. */
export function polylinePoints(node: SvgNode): Array<[number, number]> {
  return node.attrs.points
    .trim()
    .split(/\s+/)
    .map((pair) => pair.split(',').map(Number) as [number, number]);
}
