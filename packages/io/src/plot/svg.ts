/**
 * SVG written as text: a small element builder, number formatting and the shared look of every
 * pathweave figure (fonts, sizes, greys). Coordinates are SVG user units (pixels at 1:1), y down.
 */

/**
 * The plain look shared by all kinds of figure.
 * @example THEME.fontSize // 13
 */
export const THEME = Object.freeze({
  font: 'DejaVu Sans, Helvetica, Arial, sans-serif',
  fontSize: 13,
  titleSize: 15,
  smallSize: 11,
  ink: '#1a1a1a',
  grid: '#dddddd',
  frame: '#444444',
  background: '#ffffff',
  wall: '#5a5a5a',
  wallFill: '#ececec',
  blocker: '#9a9a9a',
  blockerFill: '#d2d2d2',
  transmitter: '#000000',
  receiver: '#000000',
});

/**
 * Escape text for XML character data and attribute values.
 * @example escapeXml('a < b & "c"') // "a &lt; b &amp; &quot;c&quot;"
 */
export function escapeXml(text: string): string {
  return text.replace(/[<>&"']/g, (c) => ({ '<': '&lt;', '>': '&gt;', '&': '&amp;', '"': '&quot;', "'": '&apos;' })[c]!);
}

/**
 * A coordinate rounded to 0.01 unit (finer than any screen or printer), without trailing zeros.
 * @example fmt(12.3456) // "12.35"
 */
export function fmt(v: number): string {
  if (!Number.isFinite(v)) throw new RangeError(`fmt(): coordinate must be finite, got ${v}`);
  const r = Math.round(v * 100) / 100;
  return Object.is(r, -0) ? '0' : String(r);
}

/**
 * Attribute values of an element; undefined entries are left out.
 * @example new SvgDocument(10, 10, 't').rect(0, 0, 5, 5, { fill: '#000', stroke: undefined }).toString().includes('<rect x="0" y="0" width="5" height="5" fill="#000"/>') // true
 */
export type SvgAttributes = Record<string, string | number | undefined>;

function attributeText(attrs: SvgAttributes): string {
  let s = '';
  for (const [k, v] of Object.entries(attrs)) {
    if (v === undefined) continue;
    s += ` ${k}="${typeof v === 'number' ? fmt(v) : escapeXml(v)}"`;
  }
  return s;
}

/**
 * A document under construction: elements are appended as text, groups nest.
 * @example
 * const svg = new SvgDocument(100, 50, 'demo');
 * svg.line(0, 0, 100, 50, { stroke: '#000' });
 * svg.toString().startsWith('<?xml') // true
 */
export class SvgDocument {
  private readonly parts: string[] = [];
  private depth = 0;

  /** @param title the figure's title, stored as the document's `<title>` for screen readers */
  constructor(
    readonly width: number,
    readonly height: number,
    readonly title: string,
  ) {
    if (!(width > 0 && height > 0)) throw new RangeError(`SvgDocument(): width and height must be > 0, got ${width} x ${height}`);
  }

  /** Append a raw, already well-formed fragment. */
  raw(fragment: string): this {
    this.parts.push(fragment);
    return this;
  }

  /** An element without children. */
  element(name: string, attrs: SvgAttributes): this {
    this.parts.push(`<${name}${attributeText(attrs)}/>`);
    return this;
  }

  /** Open a group `<g>`; close it with `end()`. */
  group(attrs: SvgAttributes = {}): this {
    this.parts.push(`<g${attributeText(attrs)}>`);
    this.depth++;
    return this;
  }

  /** Close the innermost group. */
  end(): this {
    if (this.depth === 0) throw new RangeError('SvgDocument.end(): no open group');
    this.depth--;
    this.parts.push('</g>');
    return this;
  }

  /** A straight line. */
  line(x1: number, y1: number, x2: number, y2: number, attrs: SvgAttributes = {}): this {
    return this.element('line', { x1, y1, x2, y2, ...attrs });
  }

  /** A rectangle. */
  rect(x: number, y: number, width: number, height: number, attrs: SvgAttributes = {}): this {
    return this.element('rect', { x, y, width: Math.max(0, width), height: Math.max(0, height), ...attrs });
  }

  /** A circle. */
  circle(cx: number, cy: number, r: number, attrs: SvgAttributes = {}): this {
    return this.element('circle', { cx, cy, r, ...attrs });
  }

  /** An open polyline through points [x0, y0, x1, y1, ...]. */
  polyline(points: readonly number[], attrs: SvgAttributes = {}): this {
    return this.element('polyline', { points: pointList(points), fill: 'none', ...attrs });
  }

  /** A closed polygon through points [x0, y0, x1, y1, ...]. */
  polygon(points: readonly number[], attrs: SvgAttributes = {}): this {
    return this.element('polygon', { points: pointList(points), ...attrs });
  }

  /** Text at (x, y); `anchor` is start, middle or end. An optional tooltip-like `<title>` child is not used: text is visible. */
  text(x: number, y: number, content: string, attrs: SvgAttributes = {}): this {
    this.parts.push(`<text${attributeText({ x, y, 'font-size': THEME.fontSize, fill: THEME.ink, ...attrs })}>${escapeXml(content)}</text>`);
    return this;
  }

  /** The whole document as SVG 1.1 text. */
  toString(): string {
    if (this.depth !== 0) throw new RangeError(`SvgDocument.toString(): ${this.depth} group(s) left open`);
    return (
      '<?xml version="1.0" encoding="UTF-8"?>\n' +
      `<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="${fmt(this.width)}" height="${fmt(this.height)}" viewBox="0 0 ${fmt(this.width)} ${fmt(this.height)}" font-family="${escapeXml(THEME.font)}">\n` +
      `<title>${escapeXml(this.title)}</title>\n` +
      `<rect x="0" y="0" width="${fmt(this.width)}" height="${fmt(this.height)}" fill="${THEME.background}"/>\n` +
      this.parts.join('\n') +
      '\n</svg>\n'
    );
  }
}

/**
 * Keeps labels from overlapping: each `place` call returns the first of a few vertical offsets
 * at which the label's estimated box (0.6 em per character) hits no earlier label, and keeps it
 * inside [left, right] horizontally by flipping it to the other side of its anchor point.
 * @example
 * const labels = new LabelPlacer(0, 800);
 * labels.place(100, 50, 'walls[0] brick', 10).y; // 50
 * labels.place(100, 50, 'walls[1] glass', 10).y; // 61.5: moved below the first
 */
export class LabelPlacer {
  private readonly boxes: [number, number, number, number][] = [];

  constructor(
    readonly left: number,
    readonly right: number,
  ) {}

  /** Where to put a label anchored (start) at (x, y): the position and the text-anchor to use. */
  place(x: number, y: number, text: string, fontSize: number): { x: number; y: number; anchor: 'start' | 'end' } {
    const w = 0.6 * fontSize * text.length;
    let anchor: 'start' | 'end' = 'start';
    let x0 = x;
    if (x + w > this.right) {
      anchor = 'end';
      x0 = x - w - 12;
    }
    const offsets = [0, 1.15, -1.15, 2.3, -2.3, 3.45].map((k) => k * fontSize);
    for (const dy of offsets) {
      const box: [number, number, number, number] = [x0, y + dy - fontSize, x0 + w, y + dy];
      if (!this.boxes.some((b) => box[0] < b[2] && box[2] > b[0] && box[1] < b[3] && box[3] > b[1])) {
        this.boxes.push(box);
        return { x: anchor === 'start' ? x : x - 12, y: y + dy, anchor };
      }
    }
    this.boxes.push([x0, y - fontSize, x0 + w, y]);
    return { x: anchor === 'start' ? x : x - 12, y, anchor };
  }
}

function pointList(points: readonly number[]): string {
  if (points.length % 2 !== 0) throw new RangeError(`pointList(): need x, y pairs, got ${points.length} numbers`);
  const out: string[] = [];
  for (let i = 0; i < points.length; i += 2) out.push(`${fmt(points[i]!)},${fmt(points[i + 1]!)}`);
  return out.join(' ');
}
