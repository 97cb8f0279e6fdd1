// Small keyboard helpers for the bench; everything works without this file.
// A freshly rendered entry row asks for focus once; other swaps (the type hint) leave focus alone.
document.addEventListener("htmx:after:swap", () => {
  const focus = document.querySelector("[data-focus-after-swap]");
  if (focus instanceof HTMLElement) {
    focus.removeAttribute("data-focus-after-swap");
    focus.focus();
    if (focus instanceof HTMLInputElement) focus.select();
  }
});

// A known label fills in its type (the server also knows it, so this only saves typing).
document.addEventListener("htmx:after:swap", () => {
  const hint = document.getElementById("type-hint");
  const type = document.querySelector("#bench-entry input[name=type]");
  if (hint && hint.dataset.type && type instanceof HTMLInputElement && type.value === "") type.value = hint.dataset.type;
});

// On a full page load `autofocus` already placed the cursor; the marker is only for swaps.
document.addEventListener("DOMContentLoaded", () => {
  for (const element of document.querySelectorAll("[data-focus-after-swap]")) element.removeAttribute("data-focus-after-swap");
});
