"""Colours and marker shapes of Curvewright's plots. Colour never carries meaning alone: every
category also has its own marker shape, and the legend names it."""

from __future__ import annotations

INCLUDED = "#1d4f91"      # deep blue, filled circle
EXCLUDED = "#c4511f"      # burnt orange, open square with a cross
UNKNOWN = "#2a7f62"       # green, diamond
QC = "#7a3b8f"            # purple, triangle
CURVE = "#222222"
CONFIDENCE_FILL = (29, 79, 145, 45)
PREDICTION = "#5b7fb0"
RANGE_SHADE = (120, 120, 120, 28)
LIMIT = "#8a6d00"
FLAGGED = "#b01c2e"
ANCHOR = "#0b7285"        # dark cyan, open hexagon around the standard's filled circle

SYMBOL_INCLUDED = "o"
SYMBOL_EXCLUDED = "s"
SYMBOL_UNKNOWN = "d"
SYMBOL_QC = "t1"
SYMBOL_ANCHOR = "h"
