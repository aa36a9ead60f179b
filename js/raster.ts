/**
 * raster.ts: CPU rasteriser for many thin lines into a floating-point accumulation buffer.
 *
 * Drawing 10^5–10^6 polylines through the canvas path API is slow. Here the lines are added
 * into typed arrays instead (weight and weighted colour per pixel), and the result is
 * tone-mapped once into RGBA8 for a single `putImageData`.
 *
 * The module has no dependencies and does not use the DOM, so it runs in the page, in a Web
 * Worker and in Node. Only `toImageData` uses the DOM `ImageData` type, and it checks first
 * that the type exists.
 *
 * Pixel model. Device pixel (x, y) covers [x, x+1) × [y, y+1), and its centre is
 * (x+0.5, y+0.5), as in canvas coordinates. A segment is drawn as a band 1 px thick, measured
 * along the minor axis (Xiaolin Wu style). The rasteriser steps along the major axis one pixel
 * at a time. At each step, one unit of coverage is split between the two pixels that straddle
 * the line, in proportion to how much each overlaps the band. The first and last steps get only
 * the fraction of the pixel that the segment spans along the major axis, evaluated at the
 * middle of that fraction. Consequences:
 *   - one segment deposits exactly `w × |extent along the major axis|`;
 *   - consecutive segments of a polyline join with no seam and no pixel counted twice;
 *   - inside the buffer, a segment clipped at the edge deposits exactly what the unclipped
 *     segment would.
 * Segments with a non-finite end are skipped. Everything outside the buffer is clipped
 * analytically before the inner loop. A guard border around the visible area takes the
 * half-pixel overhang of the band, so the inner loop needs no bounds tests.
 *
 * Storage and speed. Each step costs two float updates when the weight alone is stored, and
 * eight when weight and colour are stored. So there are two stores:
 *   - `pend`: weight only (Float32, one per pixel), for the "pending" colour. It is used while
 *     consecutive draws share a colour: one colour for everything, or a big group of rows with
 *     the same colour.
 *   - `tot`: interleaved w, r·w, g·w, b·w totals (Float32 × 4, allocated on first use).
 *     Before a different colour takes over `pend`, the old contents are flushed into `tot` in
 *     one pass over the buffer. Small groups of a different colour are drawn straight into
 *     `tot`, so they never pay for a flush.
 * `polylines` with one colour per row groups the rows by exact colour. Each group that is big
 * enough goes through `pend`; the rest go straight into `tot`. A palette of a few categories,
 * or a colour scale quantised to ≤ 4096 levels, therefore costs nearly the same as a single
 * colour. Thousands of distinct colours fall back to direct drawing, which is about 3× slower.
 */

/** Guard cells on every side of the visible area (the band overhangs at most 2 cells). */
export const GUARD = 3;
/** Minor-axis margin (px) kept when clipping: beyond it the 1-px band cannot reach the buffer. */
const MARGIN = 1.5;
/** `polylines` draws per-row colours with more distinct values than this without grouping. */
const MAX_GROUPS = 4096;

/**
 * The curve between two axes, as fractions of the gap: a cubic with horizontal tangents at both ends
 * and control points at half the x gap. At parameter t in [0, 1] it is at x = curveX(t), y = curveY(t)
 * (0 at the left axis, 1 at the right one). Both rise monotonically from 0 to 1.
 */
export const curveX = (t: number): number => t * (1.5 - 1.5 * t + t * t);
export const curveY = (t: number): number => t * t * (3 - 2 * t);

/** The height fraction of the curve where it crosses the gap fraction `x` (0..1). */
export function curveYAtX(x: number): number {
  let lo = 0;
  let hi = 1;
  for (let k = 0; k < 24; k++) {
    const t = (lo + hi) / 2;
    if (curveX(t) < x) lo = t;
    else hi = t;
  }
  return curveY((lo + hi) / 2);
}

/** Clamp a colour component into [0, 1]; NaN becomes 0. */
function unit(v: number): number {
  return v > 0 ? (v < 1 ? v : 1) : 0;
}

/** Add weights of one colour into interleaved w, r·w, g·w, b·w totals; `empty` zeroes the weights. */
function addColoured(tot: Float32Array, pend: Float32Array, r: number, g: number, b: number, empty: boolean) {
  for (let p = 0, n = pend.length; p < n; p++) {
    const w = pend[p];
    if (w !== 0) {
      const q = 4 * p;
      tot[q] += w;
      tot[q + 1] += r * w;
      tot[q + 2] += g * w;
      tot[q + 3] += b * w;
      if (empty) pend[p] = 0;
    }
  }
}

/** What an Accumulator holds, as transferable arrays (see Accumulator.state / merge). */
export interface AccumulatorState {
  width: number;
  height: number;
  pend: Float32Array | null;
  colour: [number, number, number];
  tot: Float32Array | null;
}

export class Accumulator {
  /** Visible size in device pixels. */
  readonly width: number;
  readonly height: number;
  /** Row stride of the padded storage. */
  private readonly stride: number;
  /** Weight per padded pixel for the pending colour (pr, pg, pb). */
  private readonly pend: Float32Array;
  /** Interleaved w, r·w, g·w, b·w per padded pixel, or null until first needed. */
  private tot: Float32Array | null = null;
  /** Whether `tot` holds anything since `clear()`. */
  private totUsed = false;
  /** Colour of the weights in `pend`. */
  private pr = 0;
  private pg = 0;
  private pb = 0;
  /** Steps drawn into `pend` since it was last empty (0 ⇔ pend is empty). */
  private pendSteps = 0;
  /** Colour of what is being drawn now, and whether it goes into `pend` (else into `tot`). */
  private cr = 0;
  private cg = 0;
  private cb = 0;
  private toPend = true;
  /** Steps of drawing beyond which flushing `pend` costs less than drawing into `tot`. */
  private readonly flushSteps: number;

  constructor(width: number, height: number) {
    if (!(Number.isInteger(width) && Number.isInteger(height) && width > 0 && height > 0)) {
      throw new RangeError(`Accumulator: bad size ${width}×${height}`);
    }
    this.width = width;
    this.height = height;
    this.stride = width + 2 * GUARD;
    this.pend = new Float32Array(this.stride * (height + 2 * GUARD));
    // A flush touches every pixel once, and costs up to ~8 float operations per non-empty
    // pixel. Drawing straight into `tot` costs 6 extra float updates per step. Flushing pays
    // off once a colour has drawn about as many steps as there are pixels.
    this.flushSteps = width * height;
  }

  /** Remove everything drawn. The buffers are kept. */
  clear(): void {
    this.pend.fill(0);
    this.pendSteps = 0;
    if (this.tot !== null && this.totUsed) this.tot.fill(0);
    this.totUsed = false;
  }

  /**
   * Add one anti-aliased straight segment from (x0, y0) to (x1, y1), in device pixels, with
   * colour (r, g, b in 0..1) and weight w (> 0, default 1). Non-finite ends or w ≤ 0 draw
   * nothing.
   */
  segment(x0: number, y0: number, x1: number, y1: number, r: number, g: number, b: number, w = 1): void {
    const s = x0 + y0 + x1 + y1;
    if (s - s !== 0 || !(w > 0) || w === Infinity) return;
    this.use(r, g, b, 0);
    this.seg(x0, y0, x1, y1, w);
  }

  /**
   * Add the smooth curve from (x0, y0) to (x1, y1) with horizontal tangents at both ends: a
   * cubic whose control points sit at half the x gap. It is flattened into 8–16 segments.
   */
  curveSegment(x0: number, y0: number, x1: number, y1: number, r: number, g: number, b: number, w = 1): void {
    const s = x0 + y0 + x1 + y1;
    if (s - s !== 0 || !(w > 0) || w === Infinity) return;
    this.use(r, g, b, 0);
    this.curve(x0, y0, x1, y1, w);
  }

  /**
   * Add many polylines.
   * - `xs[a]` is the x of axis a.
   * - `ys` holds row-major (rows × axes) y positions. A NaN or ±Infinity skips the two
   *   segments that touch that point.
   * - `colour` is one colour ([r, g, b] or a Float32Array of length 3), or a Float32Array of
   *   rows × 3 with one colour per row.
   * - `weight` is one weight for all rows, or a Float32Array with one weight per row. Rows
   *   with weight ≤ 0 are skipped.
   * - With `rowFilter`, only rows whose entry is non-zero are drawn.
   * - With `curve`, each piece between two axes is the smooth curve of `curveSegment`
   *   instead of a straight segment.
   */
  polylines(
    xs: Float32Array,
    ys: Float32Array,
    rows: number,
    axes: number,
    colour: Float32Array | readonly [number, number, number],
    weight: number | Float32Array = 1,
    rowFilter?: Uint8Array,
    curve = false,
  ): void {
    if (!(rows >= 0 && axes >= 0) || xs.length < axes || ys.length < rows * axes) {
      throw new RangeError('polylines: xs/ys too short for rows × axes');
    }
    const perRowColour = colour instanceof Float32Array && !(colour.length === 3 && rows !== 1);
    if (perRowColour && colour.length < rows * 3) throw new RangeError('polylines: colour too short');
    if (typeof weight !== 'number' && weight.length < rows) throw new RangeError('polylines: weight too short');
    if (rowFilter && rowFilter.length < rows) throw new RangeError('polylines: rowFilter too short');
    if (axes < 2 || rows === 0) return;
    // Rough steps per row, for the flush decision: each piece steps about |dx| times or more.
    let span = 0;
    for (let a = 1; a < axes; a++) {
      const d = Math.abs(xs[a] - xs[a - 1]);
      if (d === d) span += Math.min(d, this.width);
    }
    span = Math.max(span, axes - 1);

    if (!perRowColour) {
      this.use(colour[0], colour[1], colour[2], rows * span);
      this.rows(xs, ys, axes, weight, curve, rowFilter, null, 0, rows, null);
      return;
    }
    const col = colour as Float32Array;
    const groups = groupByColour(col, rows, rowFilter);
    if (groups === null) {
      // Too many distinct colours to group. The colour is chosen per segment: segments that
      // match the pending colour go into `pend`, the rest straight into `tot`.
      this.rows(xs, ys, axes, weight, curve, rowFilter, null, 0, rows, col);
      return;
    }
    const { order, starts } = groups;
    for (let gi = 0; gi + 1 < starts.length; gi++) {
      const g0 = starts[gi];
      const g1 = starts[gi + 1];
      const first = order[g0] * 3;
      this.use(col[first], col[first + 1], col[first + 2], (g1 - g0) * span);
      this.rows(xs, ys, axes, weight, curve, undefined, order, g0, g1, null);
    }
  }

  /**
   * Tone-map into `out` for `putImageData`: RGBA8, straight alpha, width × height × 4,
   * row-major.
   * - alpha = 1 − exp(−gain · weight), so overlapping lines read as density. With
   *   gain = gainForOpacity(α), k coincident lines of weight 1 get 1 − (1 − α)^k, as with
   *   canvas alpha blending.
   * - colour = the weight-averaged colour of everything in the pixel.
   * - Empty pixels become (0, 0, 0, 0).
   * Rows y0..y1-1 only when given (the page tone-maps a big picture a band of rows at a time).
   */
  resolve(out: Uint8ClampedArray, gain: number, y0 = 0, y1 = this.height): void {
    const W = this.width;
    const H = Math.min(this.height, y1);
    if (out.length < W * H * 4) throw new RangeError('resolve: output too short');
    const S = this.stride;
    const pend = this.pend;
    const tot = this.totUsed ? this.tot : null;
    const g = gain > 0 ? gain : 0;
    const pr = this.pr;
    const pg = this.pg;
    const pb = this.pb;
    const r8 = pr * 255;
    const g8 = pg * 255;
    const b8 = pb * 255;
    for (let y = Math.max(0, y0); y < H; y++) {
      let p = (y + GUARD) * S + GUARD;
      let o = y * W * 4;
      for (let x = 0; x < W; x++, p++, o += 4) {
        const wp = pend[p];
        if (tot === null) {
          if (wp > 0) {
            out[o] = r8;
            out[o + 1] = g8;
            out[o + 2] = b8;
            out[o + 3] = 255 - 255 * Math.exp(-g * wp);
            continue;
          }
        } else {
          const q = 4 * p;
          const w = tot[q] + wp;
          if (w > 0) {
            const k = 255 / w;
            out[o] = (tot[q + 1] + pr * wp) * k;
            out[o + 1] = (tot[q + 2] + pg * wp) * k;
            out[o + 2] = (tot[q + 3] + pb * wp) * k;
            out[o + 3] = 255 - 255 * Math.exp(-g * w);
            continue;
          }
        }
        out[o] = 0;
        out[o + 1] = 0;
        out[o + 2] = 0;
        out[o + 3] = 0;
      }
    }
  }

  // ---------------------------------------------------------------------------------------
  // internals

  /**
   * Make (r, g, b) the colour of what follows, and choose its target. The target is `pend`
   * when `pend` is empty or already holds this colour. It is also `pend`, after a flush, when
   * the old or the new drawing (`steps`, an estimate) is big enough to pay for the flush.
   * Otherwise it is `tot`.
   */
  private use(r: number, g: number, b: number, steps: number): void {
    r = unit(r);
    g = unit(g);
    b = unit(b);
    this.cr = r;
    this.cg = g;
    this.cb = b;
    if (this.pendSteps === 0 || (r === this.pr && g === this.pg && b === this.pb)) {
      this.toPend = true;
    } else if (this.pendSteps >= this.flushSteps || steps >= this.flushSteps) {
      this.flush();
      this.toPend = true;
    } else {
      this.toPend = false;
      this.totArray();
      return;
    }
    this.pr = r;
    this.pg = g;
    this.pb = b;
  }

  /** `tot`, allocated and marked in use. */
  private totArray(): Float32Array {
    this.totUsed = true;
    return this.tot ?? (this.tot = new Float32Array(4 * this.pend.length));
  }

  /**
   * Everything drawn so far, as plain arrays that can cross to another thread: the pending
   * weights with their colour, and the colour totals (or null). See `merge`.
   */
  state(): AccumulatorState {
    return {
      width: this.width,
      height: this.height,
      pend: this.pendSteps > 0 ? this.pend : null,
      colour: [this.pr, this.pg, this.pb],
      tot: this.totUsed ? this.tot : null,
    };
  }

  /** Add what another accumulator of the same size drew (its `state()`) to this one. */
  merge(other: AccumulatorState): void {
    if (other.width !== this.width || other.height !== this.height) {
      throw new RangeError(`merge: ${other.width}×${other.height} into ${this.width}×${this.height}`);
    }
    if (!other.pend && !other.tot) return;
    if (this.pendSteps > 0) this.flush();
    const tot = this.totArray();
    if (other.tot) for (let q = 0, n = tot.length; q < n; q++) tot[q] += other.tot[q];
    if (other.pend) addColoured(tot, other.pend, other.colour[0], other.colour[1], other.colour[2], false);
  }

  /** Move the contents of `pend` into `tot` and empty `pend`. */
  private flush(): void {
    addColoured(this.totArray(), this.pend, this.pr, this.pg, this.pb, true);
    this.pendSteps = 0;
  }

  /**
   * Draw rows `order[from..to)` (or rows from..to when `order` is null) of `polylines`, gap by
   * gap. Each gap's pixels form a narrow band that stays in cache, unlike whole polylines,
   * which sweep the full buffer. With `colour`, each row uses its own colour; otherwise the
   * current colour is used.
   */
  private rows(
    xs: Float32Array,
    ys: Float32Array,
    axes: number,
    weight: number | Float32Array,
    curve: boolean,
    rowFilter: Uint8Array | undefined,
    order: Uint32Array | null,
    from: number,
    to: number,
    colour: Float32Array | null,
  ): void {
    const wAll = typeof weight === 'number' ? weight : NaN;
    const wRow = typeof weight === 'number' ? null : weight;
    for (let a = 1; a < axes; a++) {
      const xa = xs[a - 1];
      const xb = xs[a];
      if ((xa + xb) - (xa + xb) !== 0) continue;
      for (let k = from; k < to; k++) {
        const row = order === null ? k : order[k];
        if (rowFilter !== undefined && rowFilter[row] === 0) continue;
        const w = wRow === null ? wAll : wRow[row];
        if (!(w > 0) || w === Infinity) continue;
        const ya = ys[row * axes + a - 1];
        const yb = ys[row * axes + a];
        if (ya - ya !== 0 || yb - yb !== 0) continue;
        if (colour !== null) this.use(colour[row * 3], colour[row * 3 + 1], colour[row * 3 + 2], 0);
        if (curve) this.curve(xa, ya, xb, yb, w);
        else this.seg(xa, ya, xb, yb, w);
      }
    }
  }

  /** Flatten the horizontal-tangent cubic from (x0, y0) to (x1, y1) into straight segments. */
  private curve(x0: number, y0: number, x1: number, y1: number, w: number): void {
    const dx = x1 - x0;
    const dy = y1 - y0;
    const ady = Math.abs(dy);
    // Nearly flat pieces stay within about 0.15 px of the chord.
    if (ady < 1 || dx === 0) {
      this.seg(x0, y0, x1, y1, w);
      return;
    }
    // The chord error of the y(t) smoothstep is about 0.75·|dy|/n². For |dy| ≈ 400, 16
    // pieces keep it near 1 px. That error is measured vertically on the steep middle part,
    // so it is much smaller across the line.
    const n = Math.min(16, Math.max(8, Math.ceil(Math.sqrt(1.5 * ady))));
    let px = x0;
    let py = y0;
    for (let s = 1; s <= n; s++) {
      const t = s / n;
      // Control points (x0 + dx/2, y0) and (x1 − dx/2, y1): see curveX / curveY.
      const x = s === n ? x1 : x0 + dx * curveX(t);
      const y = s === n ? y1 : y0 + dy * curveY(t);
      this.seg(px, py, x, y, w);
      px = x;
      py = y;
    }
  }

  /** Orient, clip and rasterise one finite segment with weight w in the current colour. */
  private seg(x0: number, y0: number, x1: number, y1: number, w: number): void {
    // (u, v) = (major, minor) coordinates.
    let u0: number, v0: number, u1: number, v1: number, uMax: number, vMax: number;
    let sMaj: number, sMin: number;
    if (Math.abs(x1 - x0) >= Math.abs(y1 - y0)) {
      u0 = x0; v0 = y0; u1 = x1; v1 = y1;
      uMax = this.width; vMax = this.height;
      sMaj = 1; sMin = this.stride;
    } else {
      u0 = y0; v0 = x0; u1 = y1; v1 = x1;
      uMax = this.height; vMax = this.width;
      sMaj = this.stride; sMin = 1;
    }
    if (u1 < u0) {
      let t = u0; u0 = u1; u1 = t;
      t = v0; v0 = v1; v1 = t;
    }
    const du = u1 - u0;
    if (!(du > 0)) return; // a point: nothing to draw
    // Along the line the minor coordinate is v(u) = a + k·u, with |k| ≤ 1. Clipping only
    // narrows [u0, u1]. The line is never re-derived from clipped ends, so clipping cannot
    // move pixels.
    const k = (v1 - v0) / du;
    const a = v0 - k * u0;
    if (u0 < 0) u0 = 0;
    if (u1 > uMax) u1 = uMax;
    const lo = -MARGIN;
    const hi = vMax + MARGIN;
    if (k > 0) {
      const uLo = (lo - a) / k;
      const uHi = (hi - a) / k;
      if (u0 < uLo) u0 = uLo;
      if (u1 > uHi) u1 = uHi;
    } else if (k < 0) {
      const uLo = (hi - a) / k;
      const uHi = (lo - a) / k;
      if (u0 < uLo) u0 = uLo;
      if (u1 > uHi) u1 = uHi;
    } else if (a < lo || a > hi) {
      return;
    }
    if (!(u1 > u0)) return;
    this.run(u0, u1, a, k, w, sMaj, sMin);
  }

  /**
   * Rasterise u ∈ [u0, u1] of the line v = a + k·u, where 0 ≤ u0 < u1 ≤ major size and v
   * stays inside the clip margin. Pixel (u, v) is at (v + GUARD)·sMin + (u + GUARD)·sMaj in
   * the padded storage.
   */
  private run(u0: number, u1: number, a: number, k: number, w: number, sMaj: number, sMin: number): void {
    // Shifted minor coordinate vv = v − ½ + GUARD: the band [v − ½, v + ½] covers padded cells
    // ⌊vv⌋ and ⌊vv⌋ + 1. Since vv ≥ GUARD − MARGIN − ½ > 0, `| 0` is floor.
    const A = a - 0.5 + GUARD;
    const off = GUARD * sMaj;
    const i0 = Math.floor(u0);
    let i1 = Math.ceil(u1) - 1;
    if (i1 < i0) i1 = i0;
    if (this.toPend) this.pendSteps += i1 - i0 + 1;
    // The ends get fractional coverage along the major axis, evaluated at the middle of the
    // covered fraction. Interior steps use the same formula with coverage 1 at the pixel centre.
    const end0 = i0 === i1 ? u1 : i0 + 1;
    this.deposit(A + k * 0.5 * (u0 + end0), i0 * sMaj + off, (end0 - u0) * w, sMin);
    if (i1 > i0) this.deposit(A + k * 0.5 * (i1 + u1), i1 * sMaj + off, (u1 - i1) * w, sMin);
    if (i1 - i0 < 2) return;

    let vv = A + k * (i0 + 1.5);
    let pm = (i0 + 1) * sMaj + off;
    const n = i1 - i0 - 1;
    if (this.toPend) {
      const pend = this.pend;
      for (let s = 0; s < n; s++, vv += k, pm += sMaj) {
        const j = vv | 0;
        const w1 = (vv - j) * w;
        const p = j * sMin + pm;
        pend[p] += w - w1;
        pend[p + sMin] += w1;
      }
    } else {
      const tot = this.tot as Float32Array;
      const cr = this.cr;
      const cg = this.cg;
      const cb = this.cb;
      const s4 = 4 * sMin;
      for (let s = 0; s < n; s++, vv += k, pm += sMaj) {
        const j = vv | 0;
        const w1 = (vv - j) * w;
        const w0 = w - w1;
        const q = 4 * (j * sMin + pm);
        tot[q] += w0;
        tot[q + 1] += cr * w0;
        tot[q + 2] += cg * w0;
        tot[q + 3] += cb * w0;
        tot[q + s4] += w1;
        tot[q + s4 + 1] += cr * w1;
        tot[q + s4 + 2] += cg * w1;
        tot[q + s4 + 3] += cb * w1;
      }
    }
  }

  /** Split weight cw between the padded cells at minor coordinate vv (shifted) and the next. */
  private deposit(vv: number, pm: number, cw: number, sMin: number): void {
    const j = vv | 0;
    const w1 = (vv - j) * cw;
    const w0 = cw - w1;
    const p = j * sMin + pm;
    if (this.toPend) {
      this.pend[p] += w0;
      this.pend[p + sMin] += w1;
    } else {
      const tot = this.tot as Float32Array;
      const q = 4 * p;
      const q1 = 4 * (p + sMin);
      tot[q] += w0;
      tot[q + 1] += this.cr * w0;
      tot[q + 2] += this.cg * w0;
      tot[q + 3] += this.cb * w0;
      tot[q1] += w1;
      tot[q1 + 1] += this.cr * w1;
      tot[q1 + 2] += this.cg * w1;
      tot[q1 + 3] += this.cb * w1;
    }
  }
}

/**
 * Group the rows (those passing `rowFilter`) by exact colour (the bit pattern of the three
 * floats). `order` lists the row indices grouped, and group g is
 * order[starts[g] .. starts[g+1]). Returns null when there are more than MAX_GROUPS colours.
 */
function groupByColour(
  colour: Float32Array,
  rows: number,
  rowFilter: Uint8Array | undefined,
): { order: Uint32Array; starts: Uint32Array } | null {
  const bits = new Uint32Array(colour.buffer, colour.byteOffset, rows * 3);
  const SIZE = 2 * MAX_GROUPS; // power of two, load factor ≤ ½
  const MASK = SIZE - 1;
  const keys = new Uint32Array(SIZE * 3);
  const ids = new Int32Array(SIZE).fill(-1);
  const gid = new Int32Array(rows);
  const counts = new Uint32Array(MAX_GROUPS + 1);
  let groups = 0;
  let lastR = 0, lastG = 0, lastB = 0, lastId = -1;
  for (let row = 0; row < rows; row++) {
    if (rowFilter !== undefined && rowFilter[row] === 0) {
      gid[row] = -1;
      continue;
    }
    const r = bits[row * 3];
    const g = bits[row * 3 + 1];
    const b = bits[row * 3 + 2];
    let id: number;
    if (lastId >= 0 && r === lastR && g === lastG && b === lastB) {
      id = lastId;
    } else {
      let h = (Math.imul(r, 0x9e3779b1) ^ Math.imul(g, 0x85ebca77) ^ Math.imul(b, 0xc2b2ae3d)) >>> 0;
      h = (h ^ (h >>> 15)) & MASK;
      for (;;) {
        id = ids[h];
        if (id < 0) {
          if (groups === MAX_GROUPS) return null;
          id = ids[h] = groups++;
          keys[h * 3] = r;
          keys[h * 3 + 1] = g;
          keys[h * 3 + 2] = b;
          break;
        }
        if (keys[h * 3] === r && keys[h * 3 + 1] === g && keys[h * 3 + 2] === b) break;
        h = (h + 1) & MASK;
      }
      lastR = r; lastG = g; lastB = b; lastId = id;
    }
    gid[row] = id;
    counts[id + 1]++;
  }
  const starts = new Uint32Array(groups + 1);
  for (let g = 0; g < groups; g++) starts[g + 1] = starts[g] + counts[g + 1];
  const fill = starts.slice(0, groups);
  const order = new Uint32Array(starts[groups]);
  for (let row = 0; row < rows; row++) {
    const id = gid[row];
    if (id >= 0) order[fill[id]++] = row;
  }
  return { order, starts };
}

/** The gain for `resolve` at which one line of weight 1 gets opacity `alpha` (0 ≤ alpha < 1). */
export function gainForOpacity(alpha: number): number {
  const a = alpha > 0 ? (alpha < 0.999999 ? alpha : 0.999999) : 0;
  return -Math.log1p(-a);
}

/**
 * Resolve `acc` into an ImageData, reusing `reuse` when it has the right size. Returns null
 * where the ImageData type does not exist (Node). Use `resolve` with a plain array there.
 */
export function toImageData(acc: Accumulator, gain: number, reuse?: ImageData): ImageData | null {
  if (typeof ImageData === 'undefined') return null;
  const img =
    reuse && reuse.width === acc.width && reuse.height === acc.height
      ? reuse
      : new ImageData(acc.width, acc.height);
  acc.resolve(img.data, gain);
  return img;
}
