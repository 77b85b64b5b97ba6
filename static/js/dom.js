// Small DOM helpers shared by the workbench modules.

/** Create an element: el("td", {class: "num"}, "text", childNode). */
export function el(tag, attrs = {}, ...children) {
  const node = document.createElement(tag);
  for (const [key, value] of Object.entries(attrs)) {
    if (value === null || value === undefined || value === false) continue;
    if (key === "class") node.className = value;
    else if (key === "dataset") Object.assign(node.dataset, value);
    else if (key.startsWith("on")) node.addEventListener(key.slice(2), value);
    else node.setAttribute(key, value === true ? "" : String(value));
  }
  for (const child of children.flat()) {
    if (child === null || child === undefined || child === false) continue;
    node.append(child instanceof Node ? child : String(child));
  }
  return node;
}

/**
 * Put a server-drawn SVG into a container. It is parsed as XML (not HTML), so a
 * malformed picture is reported instead of half-drawn; scripts never run.
 */
export function insertSvg(container, svgText) {
  const doc = new DOMParser().parseFromString(svgText, "image/svg+xml");
  const root = doc.documentElement;
  if (!root || root.nodeName.toLowerCase() !== "svg" || doc.querySelector("parsererror")) {
    container.replaceChildren(el("p", {class: "placeholder"}, "The picture could not be read."));
    return null;
  }
  const svg = document.importNode(root, true);
  container.replaceChildren(svg);
  return svg;
}

/** Show a short italic note in place of a picture or table. */
export function placeholder(container, text) {
  container.replaceChildren(el("p", {class: "placeholder"}, text));
}

/** Run fn at most once per `ms` of quiet. */
export function debounce(fn, ms) {
  let timer = null;
  const wrapped = (...args) => {
    clearTimeout(timer);
    timer = setTimeout(() => { timer = null; fn(...args); }, ms);
  };
  /** Forget a waiting call. */
  wrapped.cancel = () => {
    clearTimeout(timer);
    timer = null;
  };
  /** Run now if a call is waiting (and cancel the wait); otherwise do nothing. */
  wrapped.flush = (...args) => {
    if (timer === null) return;
    clearTimeout(timer);
    timer = null;
    fn(...args);
  };
  return wrapped;
}
