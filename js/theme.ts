// Colours and font of the chart, from the host's CSS variables.

import { cssToRgb, luminance } from "./colour";

export interface Theme {
  fg: string;
  muted: string;
  bg: string;
  line: string;
  faded: string;
  band: string;
  bandEdge: string;
  font: string;
}

/** Colours from the host's CSS variables (JupyterLab's), with fallbacks for other hosts. */
export function readTheme(el: Element): Theme {
  const css = getComputedStyle(el);
  const v = (name: string, fallback: string) => css.getPropertyValue(name).trim() || fallback;
  const bg = v("--jp-layout-color0", "#ffffff");
  const dark = luminance(cssToRgb(bg)) < 0.4;
  return {
    fg: v("--jp-ui-font-color1", dark ? "#e8e8e8" : "#1f1f1f"),
    muted: v("--jp-ui-font-color2", dark ? "#a8a8a8" : "#6b6b6b"),
    bg,
    line: dark ? "#56B4E9" : "#0072B2", // Okabe–Ito sky blue on dark, blue on light
    faded: dark ? "#6a6a6a" : "#a0a0a0",
    band: "rgba(230, 159, 0, 0.24)", // Okabe–Ito orange, translucent
    bandEdge: "#C98A00",
    font: v("--jp-ui-font-family", "system-ui, -apple-system, 'Segoe UI', sans-serif"),
  };
}

/** A key that changes when any colour or the font of a theme changes. */
export const themeKey = (t: Theme) => JSON.stringify(t);

/**
 * Call `changed` when the host's theme may have changed: JupyterLab marks its theme on `<body>`
 * (`data-jp-theme-light`, `data-jp-theme-name`, classes); other hosts on `<html>` (class, `data-theme`)
 * or through the system's colour scheme. The new stylesheet can apply a little after the attribute
 * changes, so `changed` is called again twice shortly after. Returns the function that stops watching.
 */
export function watchTheme(changed: () => void): () => void {
  if (typeof document === "undefined" || typeof MutationObserver === "undefined") return () => {};
  const timers: ReturnType<typeof setTimeout>[] = [];
  const fire = () => {
    changed();
    for (const ms of [80, 400]) timers.push(setTimeout(changed, ms));
    while (timers.length > 8) clearTimeout(timers.shift());
  };
  const observer = new MutationObserver(fire);
  const attributeFilter = ["class", "style", "data-jp-theme-light", "data-jp-theme-name", "data-theme", "data-mode"];
  for (const el of [document.documentElement, document.body]) if (el) observer.observe(el, { attributes: true, attributeFilter });
  const media = typeof matchMedia === "function" ? matchMedia("(prefers-color-scheme: dark)") : null;
  media?.addEventListener?.("change", fire);
  return () => {
    observer.disconnect();
    media?.removeEventListener?.("change", fire);
    for (const t of timers) clearTimeout(t);
  };
}
