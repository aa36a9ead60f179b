"""axeswidget: parallel coordinates for wide tables in Jupyter, with exact selections back in Python.

The public API is what ``__all__`` names: the widget, its error types, and the modules with functions
of their own (the demo data, the association measures, the axis-order search, and the contrast of a
selection against the other rows).
"""

from importlib.metadata import version

from . import contrast, demo, measures, ordering
from .encode import Column
from .export import ExportError, PngRequest
from .inputs import ColumnError
from .selection import SelectionError
from .widget import AxesWidget

__all__ = [
    "AxesWidget",
    "Column",
    "ColumnError",
    "ExportError",
    "PngRequest",
    "SelectionError",
    "contrast",
    "demo",
    "measures",
    "ordering",
    "__version__",
]
__version__ = version("axeswidget")
