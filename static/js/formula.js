// The formula tab: a probe, the symbols to keep and an element to solve the balance for;
// the answer's MathML and rows come from the server (presentation/mathforms.py and
// presentation/studies/formula.py, the same rendering as the sheet), this module only
// places them.

import {postFormula} from "./api.js";
import {el} from "./dom.js";
import {fill, problemList, savedTool, saveTool, smallTable} from "./tools.js";

const $ = (id) => document.getElementById(id);
const MATHML = "http://www.w3.org/1998/Math/MathML";

/** A server-made <math> element, parsed as XML (never as HTML) and brought into the page. */
export function mathElement(markup) {
  const doc = new DOMParser().parseFromString(markup, "application/xml");
  const root = doc.documentElement;
  if (root.namespaceURI !== MATHML || doc.getElementsByTagName("parsererror").length) {
    return el("code", {}, "(the formula could not be shown)");
  }
  return document.importNode(root, true);
}

function asked() {
  const keepText = $("formula-keep").value.trim();
  const solveFor = $("formula-solve-for").value.trim();
  return {probe: $("formula-probe").value.trim(),
          keep: keepText ? keepText.split(/[\s,]+/).filter(Boolean) : null,
          solve_for: solveFor || null};
}

function rootTable(caption, rows) {
  if (!rows.length) return el("p", {class: "formula-none"}, `${caption}: none`);
  return smallTable(caption, ["s", "|s|/2π", "damping ζ", "Q"],
    rows.map((r) => [r.s, r.frequency, r.damping, r.q]));
}

function render(d) {
  const parts = [
    el("div", {class: "formula-main", dataset: {text: d.text}}, mathElement(d.mathml)),
    el("p", {class: "formula-degrees"}, d.degrees),
    d.long ? el("table", {class: "data small formula-coefficients"},
      el("caption", {}, "The same formula, coefficient by coefficient"),
      el("thead", {}, el("tr", {}, el("th", {scope: "col"}, "Power"),
        el("th", {scope: "col"}, "Numerator"), el("th", {scope: "col"}, "Denominator"))),
      el("tbody", {}, d.coefficients.map((r) => el("tr", {},
        el("th", {scope: "row"}, r.power),
        el("td", {}, r.numerator ? mathElement(r.numerator) : "—"),
        el("td", {}, r.denominator ? mathElement(r.denominator) : "—"))))) : null,
    el("p", {class: d.check_ok ? "formula-check ok" : "formula-check bad"},
       el("span", {class: "mark", "aria-hidden": "true"}, d.check_ok ? "✔ " : "✖ "), d.check),
  ];
  if (d.balance) {
    const b = d.balance;
    parts.push(el("div", {class: "formula-balance"},
      el("h3", {}, `Balance: numerator = 0, solved for ${b.element}`),
      el("ul", {}, b.conditions.map((c) => el("li", {class: c.holds ? "holds" : null},
        el("span", {class: "power"}, c.power), mathElement(c.equation_mathml),
        c.solutions.map((s) => el("div", {class: "solution"}, mathElement(s.mathml),
                                  el("span", {class: "value"}, ` = ${s.value}`))),
        el("span", {class: "hint"}, c.at_values)))),
      el("p", {class: "hint"}, b.note)));
  }
  parts.push(smallTable("Symbols", ["Symbol", "Value", "Role", "Is"],
    d.symbols.map((s) => [s.name, s.value, s.role, s.what]), (k) => k === 1));
  parts.push(rootTable("Poles", d.poles), rootTable("Zeros", d.zeros),
             el("p", {class: "hint"}, d.roots_note));
  if (d.warnings.length) parts.push(el("ul", {class: "tool-notes"}, d.warnings.map((w) => el("li", {}, w))));
  parts.push(el("details", {class: "formula-source"}, el("summary", {}, "Text and LaTeX"),
    el("pre", {}, d.text), el("pre", {}, d.latex)));
  return parts;
}

export function createFormula({solvedFor}) {
  const form = $("formula-form");
  const out = $("formula-out");
  let seq = 0;
  let answered = null;     // {text, asked} of the formula on screen (for the sheet)

  const saved = savedTool("formula");
  if (typeof saved.probe === "string") $("formula-probe").value = saved.probe;
  if (typeof saved.keep === "string") $("formula-keep").value = saved.keep;
  if (typeof saved.solve_for === "string") $("formula-solve-for").value = saved.solve_for;

  async function run(event) {
    event.preventDefault();
    const ask = asked();
    saveTool("formula", {probe: $("formula-probe").value, keep: $("formula-keep").value,
                         solve_for: $("formula-solve-for").value});
    const mine = ++seq;
    $("formula-run").disabled = true;
    try {
      const text = await solvedFor(out, "Deriving the formula…", () => mine === seq);
      if (text === null) return;
      const {ok, data} = await postFormula(text, ask);
      if (mine !== seq) return;
      answered = ok ? {text, asked: ask} : null;
      if (!ok) {
        out.replaceChildren(problemList(data));
        return;
      }
      fill(out, render(data.display));
    } finally {
      if (mine === seq) $("formula-run").disabled = false;
    }
  }

  form.addEventListener("submit", run);
  return {
    /** The formula last shown, when it was made for `text` (for the sheet). */
    sheetRequest(text) { return answered && answered.text === text ? answered.asked : null; },
  };
}
