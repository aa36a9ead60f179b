// The chart's input on the overlay canvas: pointer gestures (brush.ts), keyboard focus and keys
// (keyboard.ts), and the pointer leaving the chart — wired to one host.

import { attachBrush, type BrushHost } from "./brush";
import { KeyboardFocus, type KeyboardHost } from "./keyboard";

export interface InputHost extends BrushHost, KeyboardHost {
  /** the pointer left the chart */
  leave(): void;
}

/** Listen for gestures and keys on `overlay`; the keyboard focus, and a function that stops listening. */
export function attachInput(overlay: HTMLCanvasElement, host: InputHost): { keys: KeyboardFocus; detach: () => void } {
  const detachBrush = attachBrush(overlay, host);
  const keys = new KeyboardFocus(overlay, host);
  const leave = () => host.leave();
  overlay.addEventListener("pointerleave", leave);
  return {
    keys,
    detach: () => {
      detachBrush();
      keys.dispose();
      overlay.removeEventListener("pointerleave", leave);
    },
  };
}
