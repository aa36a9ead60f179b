// A Web Worker that draws a slice of rows (see linespass.ts) and sends back what it drew.
//
// Messages in:  {type: "data", codes, spread}        — the table, once per table
//               {type: "job", id, width, height, i0, i1, setup} — draw rows [i0, i1)
// Messages out: {type: "progress", id, done}          — rows drawn so far
//               {type: "done", id, sel, fad, histAll, histSelected}
// A newer job abandons an older one between chunks.

import { HIST_BINS, linesDrawer, type LinesSetup } from "./linespass";
import { Accumulator } from "./raster";

interface Scope {
  onmessage: ((e: MessageEvent) => void) | null;
  postMessage(message: unknown, transfer?: Transferable[]): void;
}
const scope = self as unknown as Scope;

let codes: Uint16Array[] = []; // every column of the table, in the table's order
let spread = new Float32Array(0);
let current = 0;

const pause = () => new Promise<void>((resolve) => setTimeout(resolve, 0));

type Setup = Omit<LinesSetup, "codes" | "spread" | "bases" | "heights"> & {
  columns: number[];
  /** id of the placement tables; the tables come along only when they are new */
  placement: number;
  bases?: Float32Array[];
  heights?: Float32Array[];
};
type Job = { id: number; width: number; height: number; i0: number; i1: number; setup: Setup };

let placement = { id: -1, bases: [] as Float32Array[], heights: [] as Float32Array[] };

async function draw(msg: Job) {
  const { id, width, height, i0, i1 } = msg;
  const columns = msg.setup.columns.map((c) => codes[c]);
  const { bases, heights } = msg.setup;
  if (bases && heights) placement = { id: msg.setup.placement, bases, heights };
  if (placement.id !== msg.setup.placement) throw new Error("axeswidget worker: placement tables missing");
  const sel = new Accumulator(width, height);
  const fad = new Accumulator(width, height);
  const k = columns.length;
  const histAll = Array.from({ length: k }, () => new Uint32Array(HIST_BINS));
  const histSelected = Array.from({ length: k }, () => new Uint32Array(HIST_BINS));
  const setup: LinesSetup = { ...msg.setup, codes: columns, spread, bases: placement.bases, heights: placement.heights };
  const drawRows = linesDrawer(setup, sel, fad, histAll, histSelected);
  let chunk = 4096;
  for (let i = i0; i < i1; ) {
    const t = performance.now();
    const j = Math.min(i1, i + chunk);
    drawRows(i, j);
    i = j;
    chunk = Math.max(512, Math.min(1 << 17, Math.round((chunk * 30) / Math.max(1, performance.now() - t))));
    scope.postMessage({ type: "progress", id, done: i - i0 });
    await pause();
    if (current !== id) return; // a newer job came in
  }
  const s = sel.state();
  const f = fad.state();
  const transfer: Transferable[] = [];
  for (const st of [s, f]) for (const arr of [st.pend, st.tot]) if (arr) transfer.push(arr.buffer);
  for (const h of [...histAll, ...histSelected]) transfer.push(h.buffer);
  scope.postMessage({ type: "done", id, sel: s, fad: f, histAll, histSelected }, transfer);
}

scope.onmessage = (e: MessageEvent) => {
  const msg = e.data;
  if (msg.type === "data") {
    codes = msg.codes;
    spread = msg.spread;
  } else if (msg.type === "job") {
    current = msg.id;
    draw(msg).catch((err) => scope.postMessage({ type: "failed", id: msg.id, error: String(err) }));
  }
};
