/**
 * The pane's two DOM helpers, shared by its sections: an element with attributes and children
 * (text always as text nodes, never as markup), and a number input with its value.
 */
export type Attrs = Record<string, string>;

/** An element with attributes ("class" sets className) and children; strings become text nodes. */
export function h<K extends keyof HTMLElementTagNameMap>(tag: K, attrs: Attrs = {}, ...children: (Node | string)[]): HTMLElementTagNameMap[K] {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (k === "class") e.className = v;
    else e.setAttribute(k, v);
  }
  for (const c of children) e.append(typeof c === "string" ? document.createTextNode(c) : c);
  return e;
}

/** A number input (any step unless `attrs` says otherwise) holding `value`. */
export function numberInput(id: string, value: number, attrs: Attrs = {}): HTMLInputElement {
  const input = h("input", { id, type: "number", step: "any", ...attrs });
  input.value = String(value);
  return input;
}
