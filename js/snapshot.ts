// Sharing a view: the PNG snapshot the kernel asks for, and the list of live views the kernel keeps.
//
// Protocol (custom messages; nothing here is state, so nothing belongs in traits except `views`):
//   kernel -> page  {type: "axw:png", id, scale}
//   page -> kernel  {type: "axw:png", id, ok: true, width, height, bytes} + one buffer (the PNG file)
//                   {type: "axw:png", id, ok: false, error}
// Every page answers through the first live view of the model it holds; the kernel keeps the first
// answer to an id and ignores the rest (several browser tabs may show the same kernel).

import { viewHooks } from "./hooks";
import type { WidgetModel } from "./model";
import { toCss, viridis } from "./colour";
import { readTheme, type Theme } from "./theme";
// page -> server websocket messages above 10 MiB are dropped silently: PNG_MAX_BYTES stays well below
import { PNG_MAX_BYTES, PNG_MAX_SCALE, PNG_MESSAGE } from "./wire";

export { PNG_MAX_BYTES, PNG_MAX_SCALE, PNG_MESSAGE };

type Handler = (content: any, buffers?: unknown[]) => void;

/** The parts of the anywidget model that sharing needs. */
export type SharingModel = WidgetModel;

/** Live views in this page, per model, oldest first. */
const liveViews = new WeakMap<object, string[]>();

function randomId(): string {
  const a = new Uint32Array(2);
  crypto.getRandomValues(a); // unlike randomUUID, available outside secure contexts too (file://)
  return Array.from(a, (v) => v.toString(36)).join("");
}

function setViews(model: SharingModel, change: (ids: string[]) => string[]) {
  const now = model.get("views") ?? [];
  model.set("views", change(now.slice()));
  model.save_changes();
}

/** What the legend in the bar shows: a title, and category swatches or a colour ramp between two ends. */
interface LegendShown {
  title: string;
  items: { colour: string; label: string }[];
  ramp: { lo: string; hi: string } | null;
}

function legendShown(root: HTMLElement): LegendShown | null {
  const box = root.querySelector(".axw-legend");
  if (!box || !box.childElementCount) return null;
  const title = box.querySelector(".axw-legend-title")?.textContent ?? "";
  const items = Array.from(box.querySelectorAll(".axw-legend-item")).map((item) => ({
    colour: (item.querySelector(".axw-swatch") as HTMLElement | null)?.style.background || "#888",
    label: item.textContent ?? "",
  }));
  const rampEl = box.querySelector(".axw-ramp");
  const ramp = rampEl ? { lo: rampEl.previousElementSibling?.textContent ?? "", hi: rampEl.nextElementSibling?.textContent ?? "" } : null;
  return { title, items, ramp };
}

const TITLE_H = 24;
const LEGEND_H = 20;

/** Height (CSS px) of the strip above the chart for a title and a legend (0 when neither). */
function stripHeight(title: string, legend: LegendShown | null): number {
  return (title ? TITLE_H : 0) + (legend ? LEGEND_H : 0) + (title || legend ? 4 : 0);
}

/** The title and the legend, drawn at the top of a canvas whose transform is CSS px. */
function drawStrip(ctx: CanvasRenderingContext2D, title: string, legend: LegendShown | null, width: number, theme: Theme) {
  let y = 4;
  ctx.textBaseline = "middle";
  ctx.textAlign = "left";
  if (title) {
    ctx.fillStyle = theme.fg;
    ctx.font = `600 14px ${theme.font}`;
    ctx.fillText(title, 8, y + TITLE_H / 2, width - 16);
    y += TITLE_H;
  }
  if (!legend) return;
  const mid = y + LEGEND_H / 2;
  let x = 8;
  ctx.font = `11px ${theme.font}`;
  const text = (t: string, colour = theme.fg) => {
    ctx.fillStyle = colour;
    ctx.fillText(t, x, mid);
    x += ctx.measureText(t).width;
  };
  text(legend.title, theme.muted);
  x += 10;
  for (const item of legend.items) {
    ctx.fillStyle = item.colour;
    ctx.fillRect(x, mid - 5, 10, 10);
    x += 13;
    text(item.label);
    x += 10;
  }
  if (legend.ramp) {
    text(legend.ramp.lo);
    x += 4;
    const g = ctx.createLinearGradient(x, 0, x + 90, 0);
    for (let i = 0; i <= 8; i++) g.addColorStop(i / 8, toCss(viridis(i / 8)));
    ctx.fillStyle = g;
    ctx.fillRect(x, mid - 5, 90, 10);
    x += 94;
    text(legend.ramp.hi);
  }
}

/**
 * The picture of one view: the lines layer, the overlay on top and the status line drawn in the
 * bottom-left corner, on the theme's background, at `scale` x the canvas's CSS size.
 * The view redraws its layers at that scale when it can (the `layersAt` hook of view.ts); otherwise the screen's
 * canvases are resampled.
 */
export async function snapshot(root: HTMLElement, scale: number, title = ""): Promise<{ blob: Blob; width: number; height: number }> {
  if (!(scale > 0 && scale <= PNG_MAX_SCALE)) throw new Error(`scale must be a number in (0, ${PNG_MAX_SCALE}], got ${scale}`);
  const all = Array.from(root.querySelectorAll("canvas")) as HTMLCanvasElement[];
  if (all.length === 0) throw new Error("this view has no chart to save");
  const box = all[0].getBoundingClientRect();
  const cssW = box.width;
  const cssH = box.height;
  if (cssW < 1 || cssH < 1) throw new Error("this view is not laid out (hidden or zero size); show it and try again");
  // the chart's layers are the canvases stacked exactly on the first one
  const layers = all.filter((c) => {
    const r = c.getBoundingClientRect();
    return Math.abs(r.left - box.left) < 0.5 && Math.abs(r.top - box.top) < 0.5 && Math.abs(r.width - cssW) < 0.5 && Math.abs(r.height - cssH) < 0.5;
  });
  // a strip above the chart for the title and the colour legend, when there is either
  const legend = legendShown(root);
  const strip = stripHeight(title, legend);
  const width = Math.round(cssW * scale);
  const height = Math.round((cssH + strip) * scale);
  const out = document.createElement("canvas");
  out.width = width;
  out.height = height;
  const ctx = out.getContext("2d");
  if (!ctx) throw new Error("the browser gave no 2-D canvas context");
  const theme = readTheme(root);
  ctx.fillStyle = theme.bg;
  ctx.fillRect(0, 0, width, height);
  ctx.imageSmoothingEnabled = true;
  ctx.imageSmoothingQuality = "high";
  // drawn afresh at this scale when the view offers it (sharp at any scale), else the screen's canvases
  const hook = viewHooks(root);
  const fresh = hook?.layersAt ? await hook.layersAt(scale).catch(() => null) : null;
  const chartH = Math.round(cssH * scale);
  for (const layer of fresh ?? layers) if (layer.width > 0 && layer.height > 0) ctx.drawImage(layer, 0, height - chartH, width, chartH);
  if (strip) {
    ctx.save();
    ctx.setTransform(scale, 0, 0, scale, 0, 0);
    drawStrip(ctx, title, legend, cssW, theme);
    ctx.restore();
  }
  const status = root.querySelector(".axw-status")?.textContent ?? "";
  if (status) {
    ctx.setTransform(scale, 0, 0, scale, 0, 0);
    ctx.font = `10px ${theme.font}`;
    ctx.textBaseline = "bottom";
    ctx.textAlign = "left";
    ctx.lineWidth = 3;
    ctx.lineJoin = "round";
    ctx.strokeStyle = theme.bg;
    ctx.strokeText(status, 4, cssH + strip - 2);
    ctx.fillStyle = theme.muted;
    ctx.fillText(status, 4, cssH + strip - 2);
  }
  const blob = await new Promise<Blob | null>((resolve) => out.toBlob(resolve, "image/png"));
  if (!blob) throw new Error("the browser could not encode the PNG");
  return { blob, width, height };
}

/**
 * Register a view with the kernel (an id in the `views` trait, removed on teardown) and answer the
 * kernel's PNG requests. Returns the teardown function.
 */
export function attachSharing(model: SharingModel, root: HTMLElement): () => void {
  const id = randomId();
  const ids = liveViews.get(model) ?? [];
  liveViews.set(model, ids);
  ids.push(id);
  setViews(model, (now) => [...now.filter((v) => v !== id), id]);

  const onMessage: Handler = (content) => {
    if (!content || content.type !== PNG_MESSAGE) return;
    if (liveViews.get(model)?.[0] !== id) return; // one answer per page: the oldest live view's
    const reply = (body: object, buffers?: ArrayBuffer[]) =>
      model.send?.({ type: PNG_MESSAGE, id: content.id, ...body }, undefined, buffers);
    snapshot(root, Number(content.scale ?? 1), typeof content.title === "string" ? content.title : "")
      .then(async ({ blob, width, height }) => {
        if (blob.size > PNG_MAX_BYTES) {
          const mib = (blob.size / 1048576).toFixed(1);
          throw new Error(`the PNG would be ${mib} MiB, more than the ${PNG_MAX_BYTES / 1048576} MiB a page can send back; use a smaller scale`);
        }
        const bytes = await blob.arrayBuffer();
        reply({ ok: true, width, height, bytes: bytes.byteLength }, [bytes]);
      })
      .catch((err) => reply({ ok: false, error: String((err as Error)?.message ?? err) }));
  };
  model.on("msg:custom", onMessage);

  let gone = false;
  const detach = () => {
    if (gone) return;
    gone = true;
    model.off("msg:custom", onMessage);
    window.removeEventListener("pagehide", detach);
    const left = liveViews.get(model) ?? [];
    const at = left.indexOf(id);
    if (at >= 0) left.splice(at, 1);
    try {
      setViews(model, (now) => now.filter((v) => v !== id));
    } catch {
      // the model may already be closed; nothing left to tell
    }
  };
  // a closed or reloaded tab tears nothing down: tell the kernel on the way out (best effort)
  window.addEventListener("pagehide", detach);
  return detach;
}
