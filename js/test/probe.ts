// Read-outs of an accumulator for the tests (not shipped in the bundle): weights and colours per pixel,
// computed from the accumulator's transferable state.

import { Accumulator as Base, GUARD } from "../raster";

export class Accumulator extends Base {
  /** Accumulated weight at visible pixel (x, y); 0 outside the buffer. */
  weightAt(x: number, y: number): number {
    if (!(x >= 0 && x < this.width && y >= 0 && y < this.height)) return 0;
    const p = this.padded(x, y);
    const s = this.state();
    return (s.pend ? s.pend[p] : 0) + (s.tot ? s.tot[4 * p] : 0);
  }

  /** Weight-averaged colour [r, g, b] (0..1) at visible pixel (x, y), or null if it is empty. */
  colourAt(x: number, y: number): [number, number, number] | null {
    const w = this.weightAt(x, y);
    if (!(w > 0)) return null;
    const p = this.padded(x, y);
    const s = this.state();
    const [pr, pg, pb] = s.colour;
    if (s.tot === null) return [pr, pg, pb];
    const wp = s.pend ? s.pend[p] : 0;
    const q = 4 * p;
    return [(s.tot[q + 1] + pr * wp) / w, (s.tot[q + 2] + pg * wp) / w, (s.tot[q + 3] + pb * wp) / w];
  }

  /** Copy of the visible weights (width × height, row-major). */
  weights(): Float32Array {
    const out = new Float32Array(this.width * this.height);
    for (let y = 0, o = 0; y < this.height; y++) for (let x = 0; x < this.width; x++, o++) out[o] = this.weightAt(x, y);
    return out;
  }

  /** Largest visible weight. */
  maxWeight(): number {
    let m = 0;
    for (const v of this.weights()) if (v > m) m = v;
    return m;
  }

  private padded(x: number, y: number): number {
    return (Math.floor(y) + GUARD) * (this.width + 2 * GUARD) + Math.floor(x) + GUARD;
  }
}
