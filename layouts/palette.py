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

# Paul Tol's "muted" qualitative scheme, colour-blind safe (P. Tol 2021, "Colour Schemes",
# SRON/EPS/TN/09-002, https://personal.sron.nl/~pault/data/colourschemes.pdf).
TOL_MUTED = {
    "indigo": "#332288",
    "cyan": "#88CCEE",
    "teal": "#44AA99",
    "green": "#117733",
    "olive": "#999933",
    "sand": "#DDCC77",
    "rose": "#CC6677",
    "wine": "#882255",
    "purple": "#AA4499",
}

# Energy components in the budget panel (one small plot per model, so colour = component). None
# of these is a model's colour (SLOT_COLOURS), so a colour never means both a model and a
# component; components also differ by dash where two colours are close in lightness.
# tests/layouts checks the CIE76 colour distances between all of them.
COMPONENT_COLOURS = {
    "photons": OKABE_ITO["orange"],
    "neutrinos": TOL_MUTED["cyan"],
    "baryons": TOL_MUTED["olive"],
    "cold_dark_matter": OKABE_ITO["black"],
    "dark_energy": TOL_MUTED["indigo"],
    "curvature": TOL_MUTED["wine"],
    "critical": "#666666",
}
COMPONENT_DASHES = {"curvature": "dashdot", "critical": "dash"}  # the rest solid


def slot_colour(slot: int) -> str:
    return SLOT_COLOURS[(slot - 1) % len(SLOT_COLOURS)]


def slot_dash(slot: int) -> str:
    return SLOT_DASHES[(slot - 1) % len(SLOT_DASHES)]

# Measurements (whichever model they are compared with) and the slope guides of the density plot
# (told apart by dash and by a label at their start).
DATA_COLOUR = "#222222"
GUIDE_COLOUR = "#767676"  # the lightest grey with 4.5:1 contrast on white (WCAG 2 AA)
# by the component each guide follows
GUIDE_DASHES = {"photons": "dot", "cold_dark_matter": "dash", "dark_energy": "longdashdot"}

# One marker symbol per kind of epoch (equality, acceleration, today…), in order of appearance.
EPOCH_SYMBOLS = ("triangle-down", "diamond", "square", "star", "circle", "x", "cross", "hexagon")
# Residuals: one marker shape per model slot.
SLOT_SYMBOLS = ("circle", "square", "diamond", "triangle-up")


def slot_symbol(slot: int) -> str:
    return SLOT_SYMBOLS[(slot - 1) % len(SLOT_SYMBOLS)]
