// Timings of the accumulation rasteriser in Node.
// Run: npx esbuild js/bench/raster.bench.ts --bundle --platform=node --format=esm \
//        --outfile=build/jsbench/raster.bench.mjs && node build/jsbench/raster.bench.mjs [rows...]
// Scene: `rows` polylines × 10 axes (9 segments each) across a 1000×400 buffer, random ys.
// Prints the best of a few runs, as wall time and as this process's CPU time.
import { Accumulator, gainForOpacity } from '../raster';

const W = 1000;
const H = 400;
const AXES = 10;

/** Small deterministic PRNG so runs are comparable. */
function mulberry32(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function scene(rows: number) {
  const rnd = mulberry32(12345);
  const xs = new Float32Array(AXES);
  for (let a = 0; a < AXES; a++) xs[a] = 20 + (a * (W - 40)) / (AXES - 1);
  const ys = new Float32Array(rows * AXES);
  for (let i = 0; i < ys.length; i++) ys[i] = 10 + rnd() * (H - 20);
  // Every row its own colour (a continuous colour scale).
  const colours = new Float32Array(rows * 3);
  for (let i = 0; i < colours.length; i++) colours[i] = rnd();
  // The same quantised to 256 levels of one scalar, and 8 categories.
  const levels = new Float32Array(rows * 3);
  const cats = new Float32Array(rows * 3);
  for (let r = 0; r < rows; r++) {
    const t = Math.floor(rnd() * 256) / 255;
    levels.set([t, 0.5, 1 - t], r * 3);
    const c = Math.floor(rnd() * 8);
    cats.set([(c & 1) * 0.8, ((c >> 1) & 1) * 0.8, ((c >> 2) & 1) * 0.8], r * 3);
  }
  return { xs, ys, colours, levels, cats };
}

/** CPU time of this process in ms: less disturbed than wall time when the cores are shared. */
function cpuMs(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1000;
}

/** Best of `reps` runs: [wall ms, cpu ms]. */
function time(f: () => void, reps: number): [number, number] {
  let wall = Infinity;
  let cpu = Infinity;
  for (let r = 0; r < reps; r++) {
    const t0 = performance.now();
    const c0 = cpuMs();
    f();
    cpu = Math.min(cpu, cpuMs() - c0);
    wall = Math.min(wall, performance.now() - t0);
  }
  return [wall, cpu];
}

const fmt = ([wall, cpu]: [number, number]) =>
  `${wall.toFixed(0).padStart(6)} ms (cpu ${cpu.toFixed(0).padStart(6)})`;

const args = process.argv.slice(2).map(Number).filter((n) => n > 0);
const sizes = args.length ? args : [1e5, 1e6];
const acc = new Accumulator(W, H);
const out = new Uint8ClampedArray(W * H * 4);
const gain = gainForOpacity(0.05);
const one: [number, number, number] = [0.2, 0.4, 0.8];

for (const rows of sizes) {
  const { xs, ys, colours, levels, cats } = scene(rows);
  const reps = rows > 2e5 ? 3 : 5;
  const cases: [string, () => void][] = [
    ['one colour, straight', () => acc.polylines(xs, ys, rows, AXES, one)],
    ['8 categories, straight', () => acc.polylines(xs, ys, rows, AXES, cats)],
    ['256 colour levels, straight', () => acc.polylines(xs, ys, rows, AXES, levels)],
    ['per-row colour, straight', () => acc.polylines(xs, ys, rows, AXES, colours)],
    ['one colour, curves', () => acc.polylines(xs, ys, rows, AXES, one, 1, undefined, true)],
    ['per-row colour, curves', () => acc.polylines(xs, ys, rows, AXES, colours, 1, undefined, true)],
  ];
  for (const [name, draw] of cases) {
    const tAcc = time(() => {
      acc.clear();
      draw();
    }, reps);
    const tRes = time(() => acc.resolve(out, gain), reps);
    console.log(
      `${rows.toExponential(0).padStart(5)} rows × ${AXES} axes, ${name.padEnd(28)}` +
        ` clear+accumulate ${fmt(tAcc)}   resolve ${fmt(tRes)}`,
    );
  }
}
