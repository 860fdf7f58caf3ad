"""Model colours and component colours never mean the same thing: every component colour is far
from every model colour and from the other components in CIELAB (CIE76 ΔE*ab).

sRGB to XYZ: IEC 61966-2-1:1999 (the sRGB transfer function and its D65 matrix); XYZ to L*a*b*:
CIE 15:2004, section 8.2.1, D65 white point (0.95047, 1, 1.08883). The threshold ΔE ≥ 25 is our
own choice (common practice, no source: a just-noticeable difference is about 2.3, Mahy et al.
1994, from memory; 25 keeps two lines apart at a glance and on a projector)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest

from layouts.palette import COMPONENT_COLOURS, GUIDE_COLOUR, SLOT_COLOURS

MIN_DELTA_E = 25.0
_SRGB_TO_XYZ = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]])
_D65 = np.array([0.95047, 1.0, 1.08883])


def lab(colour: str) -> np.ndarray:
    rgb = np.array([int(colour[i:i + 2], 16) for i in (1, 3, 5)]) / 255.0
    linear = np.where(rgb <= 0.04045, rgb / 12.92, ((rgb + 0.055) / 1.055) ** 2.4)
    xyz = _SRGB_TO_XYZ @ linear / _D65
    delta = 6 / 29
    f = np.where(xyz > delta ** 3, np.cbrt(xyz), xyz / (3 * delta ** 2) + 4 / 29)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


def delta_e(a: str, b: str) -> float:
    return float(np.linalg.norm(lab(a) - lab(b)))


def test_the_conversion_gives_the_tabulated_lab_of_srgb_primaries():
    # sRGB red, green and white in L*a*b* (D65), as commonly tabulated (from memory); the
    # standard's four-digit matrix moves a* and b* in the second decimal
    np.testing.assert_allclose(lab("#FF0000"), [53.24, 80.09, 67.20], atol=0.1)
    np.testing.assert_allclose(lab("#00FF00"), [87.73, -86.18, 83.18], atol=0.1)
    np.testing.assert_allclose(lab("#FFFFFF"), [100.0, 0.0, 0.0], atol=0.02)


@pytest.mark.parametrize("component", sorted(COMPONENT_COLOURS))
def test_each_component_colour_is_far_from_every_model_colour(component):
    colour = COMPONENT_COLOURS[component]
    distances = {slot: delta_e(colour, model_colour) for slot, model_colour in enumerate(SLOT_COLOURS, 1)}
    assert min(distances.values()) >= MIN_DELTA_E, distances


def test_components_are_far_from_each_other_and_share_no_model_colour():
    assert not set(COMPONENT_COLOURS.values()) & set(SLOT_COLOURS)
    for (a, ca), (b, cb) in itertools.combinations(COMPONENT_COLOURS.items(), 2):
        assert delta_e(ca, cb) >= MIN_DELTA_E, (a, b, delta_e(ca, cb))


def test_guides_are_grey_with_aa_contrast_on_white():
    # WCAG 2.1 relative luminance and contrast ratio (section 1.4.3 and its definitions): ≥ 4.5 for AA
    rgb = np.array([int(GUIDE_COLOUR[i:i + 2], 16) for i in (1, 3, 5)]) / 255.0
    assert len(set(rgb)) == 1  # grey: never read as a model or a component
    linear = np.where(rgb <= 0.03928, rgb / 12.92, ((rgb + 0.055) / 1.055) ** 2.4)
    luminance = float(np.dot([0.2126, 0.7152, 0.0722], linear))
    assert (1.05) / (luminance + 0.05) >= 4.5
