"""The contract between the view builders (`server.views`) and the page (`layouts`).

Builders return these plain structures: numbers, names, units, symbols and *roles*; they never
choose a colour, a dash, an opacity, a line width, a marker size, a Plotly mode or how a number
is written. `layouts` reads the roles and the slots and decides the look, and writes every
`Number` as text (`layouts.text.render`). This module only declares types.
"""

from __future__ import annotations

from typing import Any, Literal, NotRequired, TypedDict, Union

__all__ = [
    "Role", "Tone", "Number", "Text", "Cell", "Series", "Strip", "Marker", "FigureSpec", "SmallPlot",
    "MultiplesSpec", "FigureBlock", "MultiplesBlock", "TableSection", "TableBlock", "TextBlock", "Block",
    "Control", "PanelSpec", "CardField", "Card", "Chip", "CardStatus", "FitParameter", "DataToolOptions",
    "PageOptions", "FitReport", "MapSpec", "MapResult",
]

Array = Any  # a 1-d numpy array or a list of floats

# What a curve or a set of points is; layouts chooses its look from this (and its slot).
#   model: one model's curve (slot colour and dash); component: one energy component of one
#   model (colour per component); guide: a reference slope; data: measurements with error
#   bars; residual: data minus one model; pull: (data - model) / error of one model; binned: one
#   model's weighted mean residual per redshift bin (x_low..x_high).
Role = Literal["model", "component", "guide", "data", "residual", "pull", "binned"]
Tone = Literal["note", "caution", "error"]


class Number(TypedDict):
    """A number to be shown with `digits` significant digits and its unit ("" = dimensionless,
    nothing appended); None or NaN is shown as missing."""

    value: float | None
    digits: int
    unit: str


# Text on screen: plain text, one number, or a sentence of text pieces and numbers.
Text = Union[str, Number, list]
Cell = Text  # a table cell: usually a name or one Number


class Series(TypedDict):
    """A curve (roles model, component, guide) or a set of points (data, residual, pull)."""

    name: Text
    role: Role
    x: Array
    y: Array
    slot: NotRequired[int]
    component: NotRequired[str]  # role component/guide: the energy component's key
    y_hover: NotRequired[str]  # symbol in the hover text (default: the figure's)
    error: NotRequired[Array]  # points: 1-sigma error bars
    text: NotRequired[list[str]]  # points: one label per point (from the user's file: escaped by layouts)
    x_low: NotRequired[Array]  # binned: each bin's lower edge
    x_high: NotRequired[Array]  # binned: each bin's upper edge


class Strip(TypedDict):
    """The small plot under a figure: each model against the reference."""

    y_title: str
    series: list[Series]
    unit: str
    points: NotRequired[list[Series]]  # measurements divided by the reference's prediction (role data)
    reference: NotRequired[str]  # which model the strip compares with ("ratio to m1 Baseline")


class Marker(TypedDict):
    """A vertical line with a label at `x` (an epoch, "today")."""

    x: float
    text: str  # the kind of epoch ("today"): markers of one kind share a symbol and a legend entry
    slot: NotRequired[int]
    model: NotRequired[str]  # the model's label, for the hover


class FigureSpec(TypedDict):
    title: Text
    x_title: str
    y_title: str
    x_hover: str
    y_hover: str
    unit: str
    x_log: bool
    y_log: NotRequired[bool]
    series: list[Series]
    strip: Strip | None
    points: NotRequired[list[Series]]
    markers: NotRequired[list[Marker]]


class SmallPlot(TypedDict):
    title: str
    slot: int
    series: list[Series]
    markers: NotRequired[list[Marker]]


class MultiplesSpec(TypedDict):
    """One small plot per model on shared axes."""

    title: str
    x_title: str
    y_title: str
    x_hover: str
    x_log: bool
    y_log: NotRequired[bool]
    unit: str
    panels: list[SmallPlot]


class FigureBlock(TypedDict):
    kind: Literal["figure"]
    id: str
    spec: FigureSpec


class MultiplesBlock(TypedDict):
    kind: Literal["multiples"]
    id: str
    spec: MultiplesSpec


class TableSection(TypedDict):
    """Rows under one heading (e.g. a theme of `model.THEMES`)."""

    heading: str
    rows: list[list[Cell]]


class TableBlock(TypedDict):
    """A table: `rows`, or `sections` of rows under headings. `column_slots` names the model
    slot a column belongs to (None for the others), so layouts can mark it."""

    kind: Literal["table"]
    title: Text
    header: list[str]
    rows: NotRequired[list[list[Cell]]]
    sections: NotRequired[list[TableSection]]
    column_slots: NotRequired[list[int | None]]


class TextBlock(TypedDict):
    kind: Literal["text"]
    text: Text
    tone: NotRequired[Tone]


Block = Union[FigureBlock, MultiplesBlock, TableBlock, TextBlock]


class Control(TypedDict):
    """A panel control bound to view key `key` of the link."""

    key: str
    kind: Literal["dropdown", "text"]
    label: str
    value: Any
    options: NotRequired[list[dict]]  # dropdown: [{"label", "value"}]
    range: NotRequired[str]
    error: NotRequired[str | None]


class PanelSpec(TypedDict):
    intro: NotRequired[str]
    controls: NotRequired[list[Control]]
    blocks: list[Block]


class CardField(TypedDict):
    key: str
    title: str
    unit: str
    text: str
    placeholder: str
    range: str
    description: str


class Card(TypedDict):
    slot: int
    label: str
    fields: list[CardField]
    presets: list[dict]
    can_remove: bool
    can_duplicate: bool
    remove_reason: NotRequired[str]  # why "remove" is disabled (shown beside it)
    duplicate_reason: NotRequired[str]


class Chip(TypedDict):
    """A model's one-line summary: its label, the parameters that differ from the defaults
    (``"w₀ = −0.9, w_a = −0.3"``), whether it is the reference, and the first problem if any."""

    slot: int
    label: str
    changes: str
    reference: bool
    problem: NotRequired[str]


class CardStatus(TypedDict, total=False):
    reference: bool
    errors: list[str]
    cautions: list[str]  # the numbers are shown, but with a caveat (e.g. a fit used outside its range)
    derived: list[tuple[str, Text]]


class FitParameter(TypedDict):
    name: str
    label: str
    unit: str
    low: str
    high: str
    range: str


class DataToolOptions(TypedDict):
    format: str
    format_link: str  # the text of the link to the format's page
    format_url: str  # that page (the app factory sets it under the URL prefix)
    no_data_reason: str  # beside the fit and map buttons while the link has no measurements
    no_fit_reason: str  # beside "load the fit" before a fit
    placeholder: str
    limits: str
    demo_label: str
    parameters: list[FitParameter]
    default_free: list[str]
    map_default: tuple[str, str]
    map_points: int  # the Δχ² map is map_points x map_points
    levels: tuple[tuple[float, float], ...]  # (probability, Δχ²) of the map's contours
    catalogue: str


class PageOptions(TypedDict):
    tabs: list[tuple[str, str]]
    zmax_range: str
    max_models: int
    view_controls: list[Control]  # view keys the whole page follows (set in the view bar)
    data_tools: DataToolOptions


class FitReport(TypedDict):
    title: str
    header: list[str]
    rows: list[list[Cell]]
    correlation_header: list[str]
    correlation_rows: list[list[Cell]]
    summary: list[Text]
    warnings: list[str]


class MapSpec(TypedDict):
    title: str
    x_title: str
    y_title: str
    x: Array
    y: Array
    delta_chi2: Array  # len(y) x len(x), NaN where no valid model
    levels: list[tuple[float, float]]
    best: tuple[float, float] | None


class MapResult(TypedDict):
    spec: MapSpec
    notes: list[Text]
