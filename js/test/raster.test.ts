// Tests for js/raster.ts (the accumulation-buffer line rasteriser).
// Run: npx esbuild js/test/raster.test.ts --bundle --platform=node --format=esm \
//        --outfile=build/jstest/raster.test.mjs && node --test build/jstest/raster.test.mjs
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { gainForOpacity, toImageData } from '../raster';
import { Accumulator } from './probe';

// ---------------------------------------------------------------------------------------------
// helpers

function sum(a: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i];
  return s;
}

function allFinite(a: ArrayLike<number>): boolean {
  for (let i = 0; i < a.length; i++) if (!Number.isFinite(a[i])) return false;
  return true;
}

/** Pearson correlation of two equally long arrays. */
function correlation(a: ArrayLike<number>, b: ArrayLike<number>): number {
  const n = a.length;
  const ma = sum(a) / n;
  const mb = sum(b) / n;
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (let i = 0; i < n; i++) {
    sab += (a[i] - ma) * (b[i] - mb);
    saa += (a[i] - ma) ** 2;
    sbb += (b[i] - mb) ** 2;
  }
  return sab / Math.sqrt(saa * sbb);
}

/** Small deterministic PRNG. */
function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

// # reference: supersampled coverage computed in this test.
// Each pixel's coverage is the fraction of its N×N sample points (at sample centres) that lie
// inside the shape of the line:
//  - 'band': the model the rasteriser implements: points within ½ px of the line measured
//    along the minor axis (vertically for shallow lines, horizontally for steep ones), with
//    the major-axis extent cut square at the ends;
//  - 'rect': a true 1-px-wide line: points within ½ px of the segment measured
//    perpendicularly, with butt ends.
function supersampled(
  x0: number, y0: number, x1: number, y1: number,
  W: number, H: number, shape: 'band' | 'rect', N = 16,
): Float64Array {
  const out = new Float64Array(W * H);
  const dx = x1 - x0;
  const dy = y1 - y0;
  const len = Math.hypot(dx, dy);
  const shallow = Math.abs(dx) >= Math.abs(dy);
  for (let py = 0; py < H; py++) {
    for (let px = 0; px < W; px++) {
      let inside = 0;
      for (let sy = 0; sy < N; sy++) {
        for (let sx = 0; sx < N; sx++) {
          const x = px + (sx + 0.5) / N;
          const y = py + (sy + 0.5) / N;
          let hit: boolean;
          if (shape === 'band') {
            if (shallow) {
              const t = (x - x0) / dx;
              hit = t >= 0 && t <= 1 && Math.abs(y - (y0 + t * dy)) <= 0.5;
            } else {
              const t = (y - y0) / dy;
              hit = t >= 0 && t <= 1 && Math.abs(x - (x0 + t * dx)) <= 0.5;
            }
          } else {
            const along = ((x - x0) * dx + (y - y0) * dy) / len;
            const across = Math.abs((x - x0) * dy - (y - y0) * dx) / len;
            hit = along >= 0 && along <= len && across <= 0.5;
          }
          if (hit) inside++;
        }
      }
      out[py * W + px] = inside / (N * N);
    }
  }
  return out;
}

/** Weight of row y (sum over x) and of column x (sum over y). */
function rowSum(w: Float32Array, W: number, y: number): number {
  let s = 0;
  for (let x = 0; x < W; x++) s += w[y * W + x];
  return s;
}
function colSum(w: Float32Array, W: number, H: number, x: number): number {
  let s = 0;
  for (let y = 0; y < H; y++) s += w[y * W + x];
  return s;
}

// ---------------------------------------------------------------------------------------------
// weight conservation

test('one segment deposits its length along the major axis', () => {
  // By construction each step along the major axis deposits exactly its coverage of the
  // segment's extent, split between two pixels with weights summing to it. The only error is
  // float32 rounding of ~100 additions (relative ~1e-7 each), hence the 1e-5 tolerance. All
  // segments stay ≥ 2 px inside the buffer, so nothing overhangs the visible area.
  const cases: [string, number, number, number, number][] = [
    ['horizontal', 10.3, 20.5, 90.7, 20.5],
    ['horizontal, off-centre', 5.25, 33.8, 61.6, 33.8],
    ['vertical', 40.5, 4.2, 40.5, 71.9],
    ['45°', 5.1, 5.3, 65.1, 65.3],
    ['45°, reversed', 80.0, 70.0, 20.0, 10.0],
    ['steep', 30.2, 3.7, 44.6, 76.3],
    ['steep, reversed', 50.9, 77.1, 47.3, 2.9],
    ['shallow', 3.4, 60.2, 96.8, 31.1],
    ['sub-pixel', 10.2, 10.2, 10.7, 10.4],
  ];
  for (const [name, x0, y0, x1, y1] of cases) {
    const acc = new Accumulator(100, 80);
    acc.segment(x0, y0, x1, y1, 1, 1, 1);
    const major = Math.max(Math.abs(x1 - x0), Math.abs(y1 - y0));
    const total = sum(acc.weights());
    assert.ok(Math.abs(total - major) <= 1e-5 * major + 1e-6, `${name}: total ${total} vs ${major}`);
    // with weight w the deposit scales by w
    const acc2 = new Accumulator(100, 80);
    acc2.segment(x0, y0, x1, y1, 1, 1, 1, 2.5);
    assert.ok(Math.abs(sum(acc2.weights()) - 2.5 * major) <= 1e-5 * major + 1e-6, `${name}: weighted`);
  }
});

test('a polyline deposits the sum of its pieces, with no double-counted joint', () => {
  const xs = new Float32Array([5, 30, 55, 80]);
  const ys = new Float32Array([10.5, 40.25, 12, 60]);
  const acc = new Accumulator(100, 80);
  acc.polylines(xs, ys, 1, 4, [1, 1, 1]);
  let expected = 0;
  for (let a = 1; a < 4; a++) expected += Math.max(Math.abs(xs[a] - xs[a - 1]), Math.abs(ys[a] - ys[a - 1]));
  assert.ok(Math.abs(sum(acc.weights()) - expected) < 1e-4, `${sum(acc.weights())} vs ${expected}`);
  // At a joint between two shallow pieces, the joint column gets weight 1, not 2.
  const acc2 = new Accumulator(100, 80);
  acc2.polylines(new Float32Array([10, 40.5, 70]), new Float32Array([20, 30, 22]), 1, 3, [1, 1, 1]);
  const w = acc2.weights();
  for (const x of [40, 41]) {
    assert.ok(Math.abs(colSum(w, 100, 80, x) - 1) < 1e-5, `joint column ${x}: ${colSum(w, 100, 80, x)}`);
  }
});

// ---------------------------------------------------------------------------------------------
// no gaps

test('steep segments cover every row between their ends, shallow ones every column', () => {
  const W = 120;
  const H = 100;
  const steep: [number, number, number, number][] = [
    [10.2, 5.5, 30.7, 90.3],
    [100.9, 3.1, 99.4, 96.6],
    [60.3, 95.2, 20.1, 4.8],
  ];
  for (const [x0, y0, x1, y1] of steep) {
    const acc = new Accumulator(W, H);
    acc.segment(x0, y0, x1, y1, 1, 1, 1);
    const w = acc.weights();
    const ya = Math.min(y0, y1);
    const yb = Math.max(y0, y1);
    for (let y = Math.floor(ya); y <= Math.floor(yb) && y < H; y++) {
      const s = rowSum(w, W, y);
      assert.ok(s > 0, `steep ${x0},${y0}: row ${y} empty`);
      // interior rows get exactly one unit, in at most two pixels
      if (y > Math.floor(ya) && y < Math.floor(yb)) {
        assert.ok(Math.abs(s - 1) < 1e-5, `row ${y}: weight ${s}`);
        let nz = 0;
        for (let x = 0; x < W; x++) if (w[y * W + x] > 0) nz++;
        assert.ok(nz >= 1 && nz <= 2, `row ${y}: ${nz} pixels`);
      }
    }
  }
  const shallow: [number, number, number, number][] = [
    [2.2, 10.5, 117.7, 80.3],
    [115.1, 50.5, 3.3, 48.2],
    [4.5, 90.2, 110.5, 5.7],
  ];
  for (const [x0, y0, x1, y1] of shallow) {
    const acc = new Accumulator(W, H);
    acc.segment(x0, y0, x1, y1, 1, 1, 1);
    const w = acc.weights();
    const xa = Math.min(x0, x1);
    const xb = Math.max(x0, x1);
    for (let x = Math.floor(xa); x <= Math.floor(xb); x++) {
      const s = colSum(w, W, H, x);
      assert.ok(s > 0, `shallow ${x0},${y0}: column ${x} empty`);
      if (x > Math.floor(xa) && x < Math.floor(xb)) assert.ok(Math.abs(s - 1) < 1e-5, `column ${x}: ${s}`);
    }
  }
});

test('curves: no gaps, horizontal at the axes, through the midpoint, same as polylines(curve)', () => {
  const W = 200;
  const H = 120;
  const acc = new Accumulator(W, H);
  const [x0, y0, x1, y1] = [20, 10.5, 180, 110.5];
  acc.curveSegment(x0, y0, x1, y1, 1, 1, 1);
  const w = acc.weights();
  for (let x = x0; x < x1; x++) assert.ok(colSum(w, W, H, x) > 0, `column ${x} empty`);
  for (let y = Math.floor(y0); y <= Math.floor(y1); y++) assert.ok(rowSum(w, W, y) > 0, `row ${y} empty`);
  // Horizontal tangents: 3 px from each end the curve is still within half a pixel of the
  // end's row (y'(0) = 0, so y(x) − y0 = O((x − x0)²)), so that pixel holds most of the
  // column.
  assert.ok(acc.weightAt(x0 + 3, Math.floor(y0)) > 0.6, 'start is not horizontal');
  assert.ok(acc.weightAt(x1 - 4, Math.floor(y1)) > 0.6, 'end is not horizontal');
  // By symmetry the curve passes through the midpoint ((x0+x1)/2, (y0+y1)/2) = (100, 60.5).
  assert.ok(acc.weightAt(100, 60) > 0.4, `midpoint weight ${acc.weightAt(100, 60)}`);
  // A straight line would pass exactly there too, so also check that the curve is not
  // straight: at x = 60 a straight line is at y = 35.5, while the curve is much lower (the
  // smoothstep has y ≈ 22 there).
  assert.equal(acc.weightAt(60, 35), 0);
  // polylines(curve = true) draws the same.
  const acc2 = new Accumulator(W, H);
  acc2.polylines(new Float32Array([x0, x1]), new Float32Array([y0, y1]), 1, 2, [1, 1, 1], 1, undefined, true);
  const w2 = acc2.weights();
  for (let i = 0; i < w.length; i++) assert.ok(Math.abs(w[i] - w2[i]) < 1e-6);
  // nearly flat pieces still draw
  const acc3 = new Accumulator(W, H);
  acc3.curveSegment(10, 50.5, 190, 50.7, 1, 1, 1);
  assert.ok(Math.abs(sum(acc3.weights()) - 180) < 1e-3);
});

// ---------------------------------------------------------------------------------------------
// clipping

test('clipping leaves in-buffer pixels exactly as an unclipped drawing', () => {
  // Draw each segment into a small buffer, and translated by (M, M) into a big buffer that
  // contains it whole. The small buffer must equal the matching window of the big one.
  const W = 40;
  const H = 30;
  const M = 200;
  const rnd = rng(7);
  const segs: [number, number, number, number][] = [
    [-20.3, 5.5, 60.2, 25.1], // crosses left and right edges
    [10.7, -30.2, 25.3, 45.8], // crosses top and bottom (steep)
    [-50, -40, 90, 70], // crosses corners
    [35.2, 25.7, 80.1, 48.3], // leaves through bottom-right
    [5.5, -0.25, 35.5, -0.25], // band half in row 0
    [-0.25, 4.5, -0.25, 26.5], // band half in column 0
    [20.2, 29.9, 20.6, 29.95], // tiny, at the bottom edge
  ];
  for (let i = 0; i < 40; i++) {
    segs.push([rnd() * 200 - 80, rnd() * 160 - 65, rnd() * 200 - 80, rnd() * 160 - 65]);
  }
  for (const [x0, y0, x1, y1] of segs) {
    const small = new Accumulator(W, H);
    const big = new Accumulator(W + 2 * M, H + 2 * M);
    small.segment(x0, y0, x1, y1, 1, 1, 1);
    big.segment(x0 + M, y0 + M, x1 + M, y1 + M, 1, 1, 1);
    const ws = small.weights();
    for (let y = 0; y < H; y++) {
      for (let x = 0; x < W; x++) {
        const b = big.weightAt(x + M, y + M);
        const s = ws[y * W + x];
        assert.ok(Math.abs(s - b) < 1e-4, `(${x0},${y0})–(${x1},${y1}) at ${x},${y}: ${s} vs ${b}`);
      }
    }
  }
  // the half-row case, explicitly: row 0 gets a quarter per column
  const acc = new Accumulator(W, H);
  acc.segment(5, -0.25, 35, -0.25, 1, 1, 1);
  assert.ok(Math.abs(acc.weightAt(20, 0) - 0.25) < 1e-6);
  assert.ok(Math.abs(sum(acc.weights()) - 30 * 0.25) < 1e-4);
});

test('segments outside the buffer or with non-finite ends draw nothing and never throw', () => {
  const W = 50;
  const H = 40;
  const acc = new Accumulator(W, H);
  const nothing: [number, number, number, number][] = [
    [60, 10, 120, 30], // right of the buffer
    [-80, 10, -1.01, 35], // left
    [10, -1.0, 45, -1.0], // band just above row 0
    [5, 41.0, 45, 41.0], // band just below the last row
    [-100, -100, -10, -1], // diagonal, outside the corner
    [NaN, 5, 20, 5],
    [5, NaN, 20, 5],
    [5, 5, Infinity, 5],
    [5, 5, 20, -Infinity],
    [Infinity, Infinity, Infinity, Infinity],
    [NaN, NaN, NaN, NaN],
    [12.5, 12.5, 12.5, 12.5], // a point
  ];
  for (const [x0, y0, x1, y1] of nothing) {
    acc.segment(x0, y0, x1, y1, 1, 0, 0);
    acc.curveSegment(x0, y0, x1, y1, 0, 0, 1);
  }
  assert.equal(acc.maxWeight(), 0);
  // Huge (finite) coordinates and zero/negative/NaN weights and colours: no throw, finite,
  // non-negative.
  const wild: [number, number, number, number][] = [
    [-1e9, 20.5, 1e9, 20.5],
    [25, -1e12, 26, 1e12],
    [-3e38, -3e38, 3e38, 3e38],
    [1e-300, 1e-300, 49.9, 39.9],
    [-1e6, 0, 1e6, 1],
  ];
  for (const [x0, y0, x1, y1] of wild) {
    acc.segment(x0, y0, x1, y1, 1, 1, 1);
    acc.curveSegment(x0, y0, x1, y1, NaN, 2, -1);
    acc.segment(x0, y0, x1, y1, 1, 1, 1, 0);
    acc.segment(x0, y0, x1, y1, 1, 1, 1, -3);
    acc.segment(x0, y0, x1, y1, 1, 1, 1, NaN);
  }
  const w = acc.weights();
  assert.ok(allFinite(w));
  assert.ok(w.every((v) => v >= 0));
  assert.ok(acc.maxWeight() > 0, 'the on-screen parts of the wild segments should draw');
  // the horizontal one at y = 20.5 covers row 20 fully, from the left edge to the right edge
  for (let x = 0; x < W; x++) assert.ok(acc.weightAt(x, 20) >= 1 - 1e-6);
  const out = new Uint8ClampedArray(W * H * 4);
  acc.resolve(out, 1);
  for (let p = 0; p < W * H; p++) {
    if (w[p] === 0) assert.equal(out[4 * p + 3], 0);
  }
  // polylines: a NaN point skips just the two segments that touch it
  const xs = new Float32Array([2, 12, 22, 32, 42]);
  const ys = new Float32Array([5.5, 10.5, NaN, 20.5, 25.5, /* row 2 */ 30.5, 30.5, 30.5, Infinity, 30.5]);
  const acc2 = new Accumulator(W, H);
  acc2.polylines(xs, ys, 2, 5, [1, 1, 1]);
  // row 0: pieces 0–1 and 3–4 drawn (10 + 10), row 1: pieces 0–1, 1–2 drawn (20)
  assert.ok(Math.abs(sum(acc2.weights()) - 40) < 1e-4, `${sum(acc2.weights())}`);
  assert.equal(acc2.weightAt(17, 15), 0); // where 1–2 of row 0 would be
  assert.equal(acc2.weightAt(37, 30), 0); // where 3–4 of row 1 would be
  assert.ok(acc2.weightAt(37, 23) > 0); // row 0, piece 3–4
});

test('bad sizes and short arrays are rejected', () => {
  assert.throws(() => new Accumulator(0, 10), RangeError);
  assert.throws(() => new Accumulator(10.5, 10), RangeError);
  assert.throws(() => new Accumulator(10, NaN), RangeError);
  const acc = new Accumulator(10, 10);
  assert.throws(() => acc.polylines(new Float32Array(3), new Float32Array(5), 2, 3, [1, 1, 1]), RangeError);
  assert.throws(() => acc.polylines(new Float32Array(3), new Float32Array(6), 2, 3, new Float32Array(5)), RangeError);
  assert.throws(() => acc.polylines(new Float32Array(3), new Float32Array(6), 2, 3, [1, 1, 1], new Float32Array(1)), RangeError);
  assert.throws(() => acc.polylines(new Float32Array(3), new Float32Array(6), 2, 3, [1, 1, 1], 1, new Uint8Array(1)), RangeError);
  assert.throws(() => acc.resolve(new Uint8ClampedArray(399), 1), RangeError);
});

// ---------------------------------------------------------------------------------------------
// colour and tone mapping

test('red and blue crossing give purple at the crossing pixel', () => {
  const acc = new Accumulator(60, 40);
  acc.segment(5, 20.5, 55, 20.5, 1, 0, 0); // red, fills row 20
  acc.segment(30.5, 3, 30.5, 37, 0, 0, 1); // blue, fills column 30
  assert.ok(Math.abs(acc.weightAt(30, 20) - 2) < 1e-6);
  const c = acc.colourAt(30, 20);
  assert.ok(c !== null);
  assert.ok(Math.abs(c[0] - 0.5) < 1e-6 && Math.abs(c[1]) < 1e-6 && Math.abs(c[2] - 0.5) < 1e-6, `${c}`);
  assert.deepEqual(acc.colourAt(10, 20), [1, 0, 0]);
  assert.deepEqual(acc.colourAt(30, 8), [0, 0, 1]);
  assert.equal(acc.colourAt(10, 10), null);
  const out = new Uint8ClampedArray(60 * 40 * 4);
  acc.resolve(out, 1);
  const px = (x: number, y: number) => Array.from(out.subarray((y * 60 + x) * 4, (y * 60 + x) * 4 + 4));
  const [r, g, b, a] = px(30, 20);
  assert.ok(Math.abs(r - 127.5) <= 0.5 && g === 0 && Math.abs(b - 127.5) <= 0.5, `${px(30, 20)}`);
  assert.ok(Math.abs(a - 255 * (1 - Math.exp(-2))) <= 0.5);
  assert.deepEqual(px(10, 20).slice(0, 3), [255, 0, 0]);
  assert.deepEqual(px(30, 8).slice(0, 3), [0, 0, 255]);
});

test('alpha grows monotonically with weight and is 0 where nothing was drawn', () => {
  const W = 30;
  const H = 20;
  const acc = new Accumulator(W, H);
  // row 2k+1 gets k coincident lines (k = 1..8), each of weight 1 on that row
  for (let k = 1; k <= 8; k++) {
    for (let n = 0; n < k; n++) acc.segment(3, 2 * k + 1.5, 27, 2 * k + 1.5, 0.2, 0.6, 0.4);
  }
  for (const gain of [0.05, 0.3, 1]) {
    // start from garbage: resolve must write every pixel, including empty ones
    const out = new Uint8ClampedArray(W * H * 4).fill(77);
    acc.resolve(out, gain);
    let prev = 0;
    for (let k = 1; k <= 8; k++) {
      const a = out[((2 * k + 1) * W + 10) * 4 + 3];
      assert.ok(Math.abs(a - 255 * (1 - Math.exp(-gain * k))) <= 0.5, `gain ${gain}, k ${k}: ${a}`);
      assert.ok(a >= prev, `gain ${gain}: alpha fell from ${prev} to ${a} at k ${k}`);
      // strictly larger wherever the exact alphas differ by at least one 8-bit step
      if (255 * (Math.exp(-gain * (k - 1)) - Math.exp(-gain * k)) >= 1) {
        assert.ok(a > prev, `gain ${gain}: alpha flat at k ${k}`);
      }
      prev = a;
    }
    const w = acc.weights();
    for (let p = 0; p < W * H; p++) {
      if (w[p] === 0) assert.deepEqual(Array.from(out.subarray(4 * p, 4 * p + 4)), [0, 0, 0, 0]);
      else assert.ok(out[4 * p + 3] > 0 || gain * w[p] < 0.002);
    }
  }
  // alpha is a strictly increasing function of weight across the whole range
  const acc2 = new Accumulator(200, 1);
  for (let x = 0; x < 200; x++) acc2.segment(x, 0.5, x + 1, 0.5, 1, 1, 1, 0.05 * (x + 1));
  const out2 = new Uint8ClampedArray(200 * 4);
  acc2.resolve(out2, 0.1);
  for (let x = 1; x < 200; x++) assert.ok(out2[4 * x + 3] >= out2[4 * x - 1]);
  assert.ok(out2[4 * 199 + 3] > out2[3]);
  // gainForOpacity: one line of weight 1 gets exactly that opacity
  for (const alpha of [0.01, 0.2, 0.5, 0.9]) {
    const acc3 = new Accumulator(10, 3);
    acc3.segment(1, 1.5, 9, 1.5, 1, 1, 1);
    const out3 = new Uint8ClampedArray(10 * 3 * 4);
    acc3.resolve(out3, gainForOpacity(alpha));
    assert.ok(Math.abs(out3[(1 * 10 + 5) * 4 + 3] - 255 * alpha) <= 0.5);
  }
  // toImageData: null where the DOM type is missing (Node), else an image of the buffer's size
  const img = toImageData(acc, 1);
  if (typeof ImageData === 'undefined') assert.equal(img, null);
  else assert.ok(img !== null && img.width === W && img.height === H);
});

test('per-row colours: grouped, direct and segment-by-segment drawing agree with channel-wise weights', () => {
  // The colour sums are checked against an independent computation: each channel drawn as
  // plain weight (weight × channel value) in single-colour accumulators.
  const W = 160;
  const H = 90;
  const axes = 5;
  const xs = new Float32Array([3, 40, 80.5, 120, 156]);
  const check = (rows: number, palette: number, seed: number) => {
    const rnd = rng(seed);
    const ys = new Float32Array(rows * axes);
    for (let i = 0; i < ys.length; i++) ys[i] = 2 + rnd() * (H - 4);
    const colour = new Float32Array(rows * 3);
    const pal = Array.from({ length: palette }, () => [rnd(), rnd(), rnd()]);
    for (let r = 0; r < rows; r++) colour.set(pal[Math.floor(rnd() * palette)], r * 3);
    const weight = new Float32Array(rows);
    for (let r = 0; r < rows; r++) weight[r] = 0.5 + rnd();

    const a = new Accumulator(W, H);
    a.polylines(xs, ys, rows, axes, colour, weight);
    const b = new Accumulator(W, H);
    for (let r = rows - 1; r >= 0; r--) {
      for (let k = 1; k < axes; k++) {
        b.segment(xs[k - 1], ys[r * axes + k - 1], xs[k], ys[r * axes + k], colour[3 * r], colour[3 * r + 1], colour[3 * r + 2], weight[r]);
      }
    }
    const channels = [0, 1, 2].map((c) => {
      const acc = new Accumulator(W, H);
      const wc = new Float32Array(rows);
      for (let r = 0; r < rows; r++) wc[r] = weight[r] * colour[3 * r + c];
      acc.polylines(xs, ys, rows, axes, [1, 1, 1], wc);
      return acc.weights();
    });
    const wa = a.weights();
    const wb = b.weights();
    let drawn = 0;
    for (let y = 0; y < H; y++) {
      for (let x = 0; x < W; x++) {
        const p = y * W + x;
        assert.ok(Math.abs(wa[p] - wb[p]) <= 1e-4 * (1 + wa[p]), `weights differ at ${x},${y}`);
        if (wa[p] < 1e-3) continue;
        drawn++;
        const ca = a.colourAt(x, y)!;
        const cb = b.colourAt(x, y)!;
        for (let c = 0; c < 3; c++) {
          const ref = channels[c][p] / wa[p];
          assert.ok(Math.abs(ca[c] - ref) < 1e-3, `polylines colour ${c} at ${x},${y}: ${ca[c]} vs ${ref}`);
          assert.ok(Math.abs(cb[c] - ref) < 1e-3, `segment colour ${c} at ${x},${y}: ${cb[c]} vs ${ref}`);
        }
      }
    }
    assert.ok(drawn > 1000);
  };
  check(3000, 3, 1); // a few big groups: drawn through the weight-only buffer and flushed
  check(300, 40, 2); // many small groups: drawn straight with colour
  check(6000, 6000, 3); // more distinct colours than can be grouped
  check(2000, 1, 4); // one colour given per row
});

// ---------------------------------------------------------------------------------------------
// independent reference

test('coverage matches a supersampled reference', () => {
  const W = 40;
  const H = 40;
  const segs: [number, number, number, number][] = [
    [3.2, 10.7, 36.9, 20.1], // slope 0.28
    [4.3, 4.6, 35.3, 35.6], // 45°
    [15.2, 2.3, 24.9, 37.8], // steep, slope 3.7
    [3.1, 30.2, 36.4, 8.9], // slope −0.64
    [30.8, 36.1, 26.2, 3.4], // steep, reversed
    [2.5, 20.5, 37.5, 20.5], // horizontal at a pixel centre
  ];
  for (const [x0, y0, x1, y1] of segs) {
    const acc = new Accumulator(W, H);
    acc.segment(x0, y0, x1, y1, 1, 1, 1);
    const got = acc.weights();
    const band = supersampled(x0, y0, x1, y1, W, H, 'band');
    const rect = supersampled(x0, y0, x1, y1, W, H, 'rect');
    // Per-pixel bound. In each step along the major axis the rasteriser samples the overlap
    // of the band with the pixel at the step's middle (midpoint rule). That overlap is
    // piecewise linear along the major axis, with slope changes of 2k at its peak and k at
    // its feet, where k ≤ 1 is |minor/major| slope. The midpoint rule is exact on linear
    // pieces and errs by at most ¼ of the slope change at a kink, so |error| ≤ 0.375·k. The
    // 16×16 sample count adds up to 1/16 (at most one sample per sample column on each
    // edge, over 16 columns of 1/256).
    const k = Math.min(Math.abs(x1 - x0), Math.abs(y1 - y0)) / Math.max(Math.abs(x1 - x0), Math.abs(y1 - y0));
    const bound = 0.375 * k + 1 / 16 + 1e-6;
    let maxErr = 0;
    for (let i = 0; i < got.length; i++) maxErr = Math.max(maxErr, Math.abs(got[i] - band[i]));
    assert.ok(maxErr <= bound, `(${x0},${y0})–(${x1},${y1}): max error ${maxErr} > ${bound}`);
    // Same area as the reference band: both are the major-axis length (up to sampling).
    assert.ok(Math.abs(sum(got) - sum(band)) <= 0.01 * sum(band));
    // Shape agreement with the band, and with a true 1-px-wide line. The latter is wider
    // across steep-ish diagonals (by √(1+k²)) but must have the same shape, so its correlation
    // is high though not perfect (~0.98 at 45°).
    const cb = correlation(got, band);
    const cr = correlation(got, rect);
    assert.ok(cb > 0.995, `correlation with band ${cb}`);
    assert.ok(cr > 0.97, `correlation with 1-px line ${cr}`);
  }
});

// ---------------------------------------------------------------------------------------------
// row filter

test('polylines with rowFilter draws only the selected rows', () => {
  const W = 100;
  const H = 60;
  const xs = new Float32Array([5, 50, 95]);
  // three rows in separate horizontal bands
  const ys = new Float32Array([10.5, 12.5, 10.5, 30.5, 28.5, 30.5, 50.5, 52.5, 50.5]);
  const filter = new Uint8Array([1, 0, 1]);
  const colours = new Float32Array([1, 0, 0, 0, 1, 0, 0, 0, 1]);
  for (const colour of [[0.5, 0.5, 0.5] as [number, number, number], colours]) {
    for (const curve of [false, true]) {
      const acc = new Accumulator(W, H);
      acc.polylines(xs, ys, 3, 3, colour, 1, filter, curve);
      const w = acc.weights();
      let band1 = 0;
      for (let y = 20; y < 40; y++) band1 += rowSum(w, W, y);
      assert.equal(band1, 0, 'the unselected row was drawn');
      // selected rows match drawing them alone
      const ref = new Accumulator(W, H);
      ref.polylines(xs, ys.slice(0, 3), 1, 3, [1, 1, 1], 1, undefined, curve);
      ref.polylines(xs, ys.slice(6, 9), 1, 3, [1, 1, 1], 1, undefined, curve);
      const wr = ref.weights();
      for (let p = 0; p < w.length; p++) assert.ok(Math.abs(w[p] - wr[p]) < 1e-5);
      assert.ok(sum(w) > 150);
      if (colour === colours) {
        assert.deepEqual(acc.colourAt(50, 12), [1, 0, 0]);
        assert.deepEqual(acc.colourAt(50, 52), [0, 0, 1]);
      }
    }
  }
  // an all-zero filter draws nothing; per-row weights ≤ 0 are skipped too
  const acc = new Accumulator(W, H);
  acc.polylines(xs, ys, 3, 3, colours, 1, new Uint8Array(3));
  acc.polylines(xs, ys, 3, 3, [1, 1, 1], new Float32Array([0, -1, NaN]));
  assert.equal(acc.maxWeight(), 0);
});

test('clear empties the buffer, including per-pixel colour', () => {
  const acc = new Accumulator(30, 30);
  acc.segment(2, 5.5, 28, 5.5, 1, 0, 0);
  acc.segment(2, 5.5, 28, 5.5, 0, 1, 0);
  acc.clear();
  assert.equal(acc.maxWeight(), 0);
  acc.segment(2, 5.5, 28, 5.5, 0, 0, 1);
  assert.deepEqual(acc.colourAt(10, 5), [0, 0, 1]);
  assert.ok(Math.abs(acc.weightAt(10, 5) - 1) < 1e-6);
  // a second colour on the same pixels now mixes with blue only, not with the cleared red/green
  acc.segment(2, 5.5, 28, 5.5, 1, 1, 0);
  const c = acc.colourAt(10, 5)!;
  assert.ok(Math.abs(acc.weightAt(10, 5) - 2) < 1e-6);
  for (const [got, want] of [[c[0], 0.5], [c[1], 0.5], [c[2], 0.5]]) assert.ok(Math.abs(got - want) < 1e-6, `${c}`);
  // the same after clearing a buffer whose colours were per pixel
  acc.clear();
  acc.segment(2, 5.5, 28, 5.5, 0, 0, 1);
  acc.segment(2, 5.5, 28, 5.5, 0, 1, 0);
  assert.ok(Math.abs(acc.weightAt(10, 5) - 2) < 1e-6);
  assert.deepEqual(acc.colourAt(10, 5)!.map((v) => Math.round(v * 1e6) / 1e6), [0, 0.5, 0.5]);
});

test("merging the states of two accumulators equals drawing everything into one", () => {
  const W = 64;
  const H = 48;
  const whole = new Accumulator(W, H);
  const a = new Accumulator(W, H);
  const b = new Accumulator(W, H);
  const segs: [number, number, number, number, number, number, number][] = [];
  let seed = 7;
  const rnd = () => ((seed = (seed * 16807) % 2147483647) / 2147483647);
  for (let i = 0; i < 200; i++) segs.push([rnd() * W, rnd() * H, rnd() * W, rnd() * H, i % 3 === 0 ? 1 : 0, 0.5, i % 2]);
  segs.forEach(([x0, y0, x1, y1, r, g, bl], i) => {
    whole.segment(x0, y0, x1, y1, r, g, bl);
    (i < 120 ? a : b).segment(x0, y0, x1, y1, r, g, bl);
  });
  a.merge(b.state());
  const one = new Uint8ClampedArray(W * H * 4);
  const two = new Uint8ClampedArray(W * H * 4);
  whole.resolve(one, 0.4);
  a.resolve(two, 0.4);
  let worst = 0;
  for (let i = 0; i < one.length; i++) worst = Math.max(worst, Math.abs(one[i] - two[i]));
  assert.ok(worst <= 1, `largest channel difference ${worst}`); // float32 sums in another order
  assert.throws(() => a.merge(new Accumulator(W + 1, H).state()), RangeError);
});
