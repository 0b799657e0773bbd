/**
 * Start tags of an HTML page with their attributes, read by the attribute rules of the HTML
 * standard (WHATWG HTML, "13.1.2.3 Attributes"): a value may be double-quoted, single-quoted,
 * unquoted (up to whitespace or ">", as minifiers write it: <script src=a.js>) or absent (a
 * boolean attribute, value ""); names are case-insensitive; comments and the text inside <script>
 * and <style> are skipped. Enough to check our own built pages, whatever a minifier does to them.
 */
export interface StartTag {
  name: string;
  attributes: Map<string, string>;
  /** Text up to the matching end tag, for script and style (raw text elements). */
  content?: string;
}

const SPACE = /[\t\n\f\r ]/;

/** Every start tag of `html`, in document order. */
export function startTags(html: string): StartTag[] {
  const tags: StartTag[] = [];
  let i = 0;
  while (i < html.length) {
    const lt = html.indexOf("<", i);
    if (lt < 0) break;
    if (html.startsWith("<!--", lt)) {
      const end = html.indexOf("-->", lt + 4);
      i = end < 0 ? html.length : end + 3;
      continue;
    }
    const nameMatch = /^<([a-zA-Z][^\t\n\f\r />]*)/.exec(html.slice(lt, lt + 64));
    if (!nameMatch) {
      i = lt + 1;
      continue;
    }
    const tag: StartTag = { name: nameMatch[1].toLowerCase(), attributes: new Map() };
    i = lt + nameMatch[0].length;
    while (i < html.length && html[i] !== ">") {
      if (SPACE.test(html[i]) || html[i] === "/") {
        i++;
        continue;
      }
      let name = "";
      while (i < html.length && !SPACE.test(html[i]) && !"/>=".includes(html[i])) name += html[i++];
      while (i < html.length && SPACE.test(html[i])) i++;
      let value = "";
      if (html[i] === "=") {
        i++;
        while (i < html.length && SPACE.test(html[i])) i++;
        const q = html[i];
        if (q === '"' || q === "'") {
          const end = html.indexOf(q, i + 1);
          value = html.slice(i + 1, end < 0 ? html.length : end);
          i = end < 0 ? html.length : end + 1;
        } else {
          while (i < html.length && !SPACE.test(html[i]) && html[i] !== ">") value += html[i++];
        }
      }
      const key = name.toLowerCase();
      if (key && !tag.attributes.has(key)) tag.attributes.set(key, value);
    }
    i++;
    if (tag.name === "script" || tag.name === "style") {
      const close = html.toLowerCase().indexOf(`</${tag.name}`, i);
      tag.content = html.slice(i, close < 0 ? html.length : close);
      i = close < 0 ? html.length : close;
    }
    tags.push(tag);
  }
  return tags;
}
