/**
 * Tiny DOM builders. Everything the panel shows goes through these: text is only ever set with
 * `textContent` / text nodes (log text is untrusted), attributes with `setAttribute`. No HTML
 * strings are parsed anywhere in the webview.
 */
export type Attrs = Record<string, string | number | boolean | undefined>;
export type Child = Node | string | number | null | undefined | false;

function applyAttrs(node: Element, attrs: Attrs | undefined): void {
  if (!attrs) return;
  for (const [k, v] of Object.entries(attrs)) {
    if (v === undefined || v === false) continue;
    // `style` attributes would be refused by the CSP; classes and presentation attributes only.
    if (k === 'style' || k.startsWith('on')) throw new Error(`dom: refusing attribute ${k}`);
    node.setAttribute(k, v === true ? '' : String(v));
  }
}

function append(node: Node, children: readonly Child[]): void {
  for (const c of children) {
    if (c === null || c === undefined || c === false) continue;
    node.appendChild(typeof c === 'string' || typeof c === 'number' ? document.createTextNode(String(c)) : c);
  }
}

/** An HTML element with attributes and children (strings become text nodes). */
export function h<K extends keyof HTMLElementTagNameMap>(tag: K, attrs?: Attrs, ...children: Child[]): HTMLElementTagNameMap[K];
export function h(tag: string, attrs?: Attrs, ...children: Child[]): HTMLElement;
export function h(tag: string, attrs?: Attrs, ...children: Child[]): HTMLElement {
  const node = document.createElement(tag);
  applyAttrs(node, attrs);
  append(node, children);
  return node;
}

export const SVG_NS = 'http://www.w3.org/2000/svg';

/** An SVG element; geometry and colour classes are set as attributes (no inline style). */
export function s<K extends keyof SVGElementTagNameMap>(tag: K, attrs?: Attrs, ...children: Child[]): SVGElementTagNameMap[K] {
  const node = document.createElementNS(SVG_NS, tag);
  applyAttrs(node, attrs);
  append(node, children);
  return node;
}

/** Replace all children of `node`. */
export function setChildren(node: Element, ...children: Child[]): void {
  node.replaceChildren();
  append(node, children);
}
