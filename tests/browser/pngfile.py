"""Reading PNG files in tests: header fields by the PNG specification, pixels by matplotlib."""

from __future__ import annotations

import io
import struct

import numpy as np

SIGNATURE = b"\x89PNG\r\n\x1a\n"


def png_size(data: bytes) -> tuple[int, int]:
    """(width, height) from the IHDR chunk, checking the layout the PNG specification (ISO/IEC 15948,
    sections 5.2-5.3 and 11.2.2) prescribes: signature, then a 13-byte IHDR chunk first."""
    assert data[:8] == SIGNATURE, "not a PNG signature"
    length, kind = struct.unpack(">I4s", data[8:16])
    assert kind == b"IHDR" and length == 13, f"first chunk is {kind!r} of {length} bytes, not IHDR"
    width, height = struct.unpack(">II", data[16:24])
    return width, height


def png_pixels(data: bytes) -> np.ndarray:
    """Pixels as an (h, w, channels) float array in [0, 1], decoded by matplotlib.image.imread."""
    from matplotlib import image

    return image.imread(io.BytesIO(data), format="png")


def distinct_colours(pixels: np.ndarray) -> int:
    rgb = np.round(pixels[..., :3] * 255).astype(np.uint8).reshape(-1, 3)
    return len(np.unique(rgb, axis=0))
