"""The user's input: a drawing file (TOML) read into a frozen :class:`~coilstage.drawing.schema.Drawing`."""

from coilstage.drawing.load import load_drawing, parse_drawing

__all__ = ["load_drawing", "parse_drawing"]
