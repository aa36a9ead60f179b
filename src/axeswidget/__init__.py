"""axeswidget: parallel coordinates for wide tables in Jupyter, with exact selections back in Python."""

from . import demo
from .encode import ColumnError
from .export import ExportError
from .selection import SelectionError
from .widget import AxesWidget

__all__ = ["AxesWidget", "ColumnError", "ExportError", "SelectionError", "demo"]
__version__ = "0.1.0"
