// The stylesheet (js/widget.css). Hosts apply it from the widget's `_css`; a page without that (an
// exported file, a bare test page) gets it from here, once per document or shadow root.

import css from "./widget.css";

/** Make sure the widget's styles apply to `root` (already in its document). */
export function ensureStyles(root: HTMLElement): void {
  if (getComputedStyle(root).getPropertyValue("--axw-styled").trim()) return;
  const place = root.getRootNode();
  const style = document.createElement("style");
  style.dataset.axw = "styles";
  style.textContent = css;
  if (place instanceof ShadowRoot) place.prepend(style);
  else (document.head ?? document.documentElement).append(style);
}
