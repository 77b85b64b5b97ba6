// The phasor and waveform panels: the server draws the SVG, the page inserts it
// and adds behaviour (hover readout, click to select an element).

import {el, insertSvg, placeholder} from "./dom.js";

/**
 * The element picker of the phasor panel: one checkbox per element; the selected
 * element is always drawn (its box is checked and marked "current").
 */
// Names offered as checkboxes; a larger circuit gets a name box to add the others.
const PICKER_NAMES = 40;
// Suggestions the name box offers at once.
const SUGGESTIONS = 30;

export function renderPicker(fieldset, allNames, {shown, selected, limit, onChange,
                                                 total = allNames.length,
                                                 accepts = (name) => allNames.includes(name)}) {
  const legend = fieldset.querySelector("legend");
  let names = allNames;
  if (allNames.length > PICKER_NAMES) {
    const keep = new Set([selected, ...shown]);
    names = allNames.filter((n, i) => i < PICKER_NAMES || keep.has(n));
  }
  const boxes = names.map((name) => {
    const on = name === selected || shown.includes(name);
    const input = el("input", {type: "checkbox", value: name, checked: on,
                               disabled: name === selected,
                               "aria-label": `show ${name} in the phasor diagram`});
    input.addEventListener("change", () => {
      const picked = [...fieldset.querySelectorAll("input:checked")].map((i) => i.value);
      if (picked.length > limit) {
        input.checked = false;
        return;
      }
      onChange(picked.filter((n) => n !== selected));
    });
    return el("label", {class: name === selected ? "current" : null,
                        title: name === selected ? "the selected element is always shown" : null},
              input, name);
  });
  const extra = [];
  if (names.length < total) {
    // A name box, its suggestions the few names that start with what was typed (a
    // list of every name of a big circuit would cost the page seconds).
    const listId = "picker-names";
    const input = el("input", {type: "text", list: listId, class: "picker-add", size: 12,
                               placeholder: `+ ${total - names.length} more…`,
                               "aria-label": "add an element to the phasor diagram by name"});
    const list = el("datalist", {id: listId});
    input.addEventListener("input", () => {
      const typed = input.value.trim().toLowerCase();
      const hits = typed ? allNames.filter((n) => n.toLowerCase().startsWith(typed)).slice(0, SUGGESTIONS) : [];
      list.replaceChildren(...hits.map((n) => el("option", {value: n})));
    });
    input.addEventListener("change", () => {
      const name = input.value.trim();
      if (accepts(name) && name !== selected && !shown.includes(name) &&
          shown.length + 1 < limit) onChange([...shown, name]);
    });
    extra.push(input, list);
  }
  fieldset.replaceChildren(legend, ...boxes, ...extra);
}

/** Insert the phasor SVG; hovering an arrow shows its exact value, clicking selects. */
export function showPhasors(figure, readout, svgText, {onSelect}) {
  const svg = insertSvg(figure, svgText);
  readout.textContent = "";
  if (!svg) return;
  const arrows = svg.querySelectorAll(".pb-arrow, circle[data-element]");
  for (const arrow of arrows) {
    const shaft = arrow.matches("[data-element]") ? arrow : arrow.querySelector("[data-element]");
    const name = shaft && shaft.dataset.element;
    const words = (arrow.querySelector("title") || {}).textContent || "";
    arrow.addEventListener("mouseenter", () => {
      arrow.classList.add("hot");
      readout.textContent = words;
    });
    arrow.addEventListener("mouseleave", () => arrow.classList.remove("hot"));
    if (name) {
      arrow.style.cursor = "pointer";
      arrow.addEventListener("click", () => onSelect(name));
    }
  }
}

/** Insert the waveform SVG of one element and list its numbers beside it. */
export function showWaveform(figure, facts, answer) {
  const svg = insertSvg(figure, answer.svg);
  facts.replaceChildren();
  if (!svg) return;
  const items = [
    ["mean power P", answer.display.p_avg],
    ["energy returned / cycle", answer.display.returned_energy],
    ["reactive power Q", answer.display.q_var],
    ["energy taken / cycle", answer.display.absorbed_energy],
    ["peak v", answer.display.v_peak],
    ["p(t) range", answer.display.p_range],
    ["peak i", answer.display.i_peak],
    ["period", answer.display.period],
  ];
  for (const [term, value] of items) facts.append(el("div", {}, el("dt", {}, term), el("dd", {}, value)));
}

export function clearViews(phasorFigure, waveFigure, waveFacts, readout, note) {
  placeholder(phasorFigure, note);
  placeholder(waveFigure, note);
  waveFacts.replaceChildren();
  readout.textContent = "";
}
