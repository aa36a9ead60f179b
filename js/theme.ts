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
