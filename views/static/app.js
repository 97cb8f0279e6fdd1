// Small keyboard helpers for the bench; everything works without this file.
document.addEventListener("htmx:after:swap", (event) => {
  const root = event.target instanceof Element ? event.target : document;
  const focus = root.querySelector("[data-focus-after-swap]") || document.querySelector("[data-focus-after-swap]");
  if (focus instanceof HTMLElement) {
    focus.focus();
    if (focus instanceof HTMLInputElement) focus.select();
  }
});
