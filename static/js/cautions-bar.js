// The safety cautions bar at the foot of the page: its short titles, opened whole by
// its button or a click on them; whether it is open is kept across reloads.

import {save} from "./store.js";

const $ = (id) => document.getElementById(id);

export function setupCautions(open) {
  const footer = $("cautions");
  const toggle = $("cautions-toggle");
  const show = (on) => {
    footer.classList.toggle("open", on);
    toggle.setAttribute("aria-expanded", on ? "true" : "false");
    save({cautionsOpen: on});
  };
  show(open);
  toggle.addEventListener("click", () => show(!footer.classList.contains("open")));
  $("caution-list").addEventListener("click", () => { if (!footer.classList.contains("open")) show(true); });
}
