"""The wire contract shared with the page: ``wire.json``, read here and bundled into ``widget.js``.

Codes: numeric cells are quantised onto ``0..CODE_MAX``; ``CODE_MISSING`` marks a missing value.
Marginal histograms put code ``c`` in bin ``c >> HIST_SHIFT`` (``HIST_BINS`` bins). The density view
splits codes into ``DENSITY_BINS`` bins and is the default above ``DENSITY_ROWS`` rows. Category axes
draw at most ``CATEGORY_BAND_LIMIT`` bands. PNG requests use the custom message ``PNG_MESSAGE``, at
most ``PNG_MAX_SCALE`` x and ``PNG_MAX_BYTES``. ``OPTIONS`` are the view option traits.
"""

from __future__ import annotations

import json
from pathlib import Path

CONTRACT: dict = json.loads((Path(__file__).parent / "wire.json").read_text(encoding="utf-8"))

CODE_MAX: int = CONTRACT["code"]["max"]
CODE_MISSING: int = CONTRACT["code"]["missing"]
HIST_BINS: int = CONTRACT["histogram"]["bins"]
HIST_SHIFT: int = CONTRACT["histogram"]["shift"]
DENSITY_BINS: int = CONTRACT["density"]["bins"]
DENSITY_ROWS: int = CONTRACT["density"]["rows"]
CATEGORY_BAND_LIMIT: int = CONTRACT["category"]["band_limit"]
PNG_MESSAGE: str = CONTRACT["png"]["message"]
PNG_MAX_BYTES: int = CONTRACT["png"]["max_bytes"]
PNG_MAX_SCALE: float = float(CONTRACT["png"]["max_scale"])
OPTIONS: tuple[str, ...] = tuple(CONTRACT["options"])
