"""Pure page builders: plain data in, Dash component trees or Plotly figure dicts out.

No callbacks and no computation beyond formatting live here.
"""

from layouts.figures import figure
from layouts.ids import ids
from layouts.page import page
from layouts.palette import COMPONENT_COLOURS, OKABE_ITO, SLOT_COLOURS, SLOT_DASHES, slot_colour

__all__ = ["figure", "ids", "page", "COMPONENT_COLOURS", "OKABE_ITO", "SLOT_COLOURS", "SLOT_DASHES",
           "slot_colour"]
