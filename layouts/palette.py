"""Colour-blind-safe colours: the eight of Okabe & Ito (2008), "Color Universal Design (CUD):
how to make figures and presentations that are friendly to colorblind people"
(https://jfly.uni-koeln.de/color/). Slots also differ by line dash, so print in grey still works.
"""

OKABE_ITO = {
    "black": "#000000",
    "orange": "#E69F00",
    "sky blue": "#56B4E9",
    "bluish green": "#009E73",
    "yellow": "#F0E442",
    "blue": "#0072B2",
    "vermillion": "#D55E00",
    "reddish purple": "#CC79A7",
}

# Model slots 1..4.
SLOT_COLOURS = (OKABE_ITO["blue"], OKABE_ITO["vermillion"], OKABE_ITO["bluish green"], OKABE_ITO["reddish purple"])
SLOT_DASHES = ("solid", "dash", "dot", "dashdot")

# Energy components in the budget panel (one small plot per model, so colour = component).
COMPONENT_COLOURS = {
    "photons": OKABE_ITO["orange"],
    "neutrinos": OKABE_ITO["sky blue"],
    "baryons": OKABE_ITO["bluish green"],
    "cold_dark_matter": OKABE_ITO["black"],
    "dark_energy": OKABE_ITO["reddish purple"],
    "curvature": OKABE_ITO["vermillion"],
    "critical": OKABE_ITO["blue"],
}


def slot_colour(slot: int) -> str:
    return SLOT_COLOURS[(slot - 1) % len(SLOT_COLOURS)]


def slot_dash(slot: int) -> str:
    return SLOT_DASHES[(slot - 1) % len(SLOT_DASHES)]

# Measurements (whichever model they are compared with) and the slope guides of the density plot.
DATA_COLOUR = "#222222"
GUIDE_COLOUR = "#999999"
