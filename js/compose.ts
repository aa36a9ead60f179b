// Compositing the lines layer: the selected layer over the faded one, and the transposed picture of the
// horizontal orientation.

import type { Accumulator } from "./raster";

/** Swap rows and columns of an image (src W x H into dst H x W). */
export function transpose(src: ImageData, dst: ImageData) {
  const a = new Uint32Array(src.data.buffer);
  const b = new Uint32Array(dst.data.buffer);
  const W = src.width;
  const H = src.height;
  for (let y = 0; y < H; y++) {
    const row = y * W;
    for (let x = 0; x < W; x++) b[x * H + y] = a[row + x];
  }
}

/** Selected layer over faded layer (straight alpha), into `image` (rows y0..y1-1 when given). */
export function compose(fad: Accumulator, sel: Accumulator, image: ImageData, fadedGain: number, gain: number, fadedUsed = true, y0 = 0, y1 = image.height) {
  const out = image.data;
  const tmp = compose.buffer.length === out.length ? compose.buffer : (compose.buffer = new Uint8ClampedArray(out.length));
  const row = image.width * 4;
  if (fadedUsed) fad.resolve(out, fadedGain, y0, y1);
  else out.fill(0, y0 * row, y1 * row);
  sel.resolve(tmp, gain, y0, y1);
  for (let p = y0 * row, end = y1 * row; p < end; p += 4) {
    const as = tmp[p + 3];
    if (!as) continue;
    if (as === 255 || !out[p + 3]) {
      out[p] = tmp[p];
      out[p + 1] = tmp[p + 1];
      out[p + 2] = tmp[p + 2];
      out[p + 3] = as;
      continue;
    }
    const s = as / 255;
    const f = (out[p + 3] / 255) * (1 - s);
    const a = s + f;
    out[p] = (tmp[p] * s + out[p] * f) / a;
    out[p + 1] = (tmp[p + 1] * s + out[p + 1] * f) / a;
    out[p + 2] = (tmp[p + 2] * s + out[p + 2] * f) / a;
    out[p + 3] = a * 255;
  }
}
compose.buffer = new Uint8ClampedArray(0);
