"""View builders: from a link's state to semantic panel specs (`layouts.specs`).

One module per tab (`budget`, `distances`, `time`, `volume`, `acoustic`, `table`, `data`), each
with ``build(comparison) -> PanelSpec``, registered in `server.tabs`; `comparison` (the models,
the reference, the measurements and scores, looked up once), `parts` (spec pieces the panels
share), `page` (the open panel, the page's options), `cards`, `downloads` (panel CSV,
parameter-set JSON) and `data_tools` (upload, fit and map requests, the fit report). The specs
carry numbers, roles, units and symbols; `layouts` decides how they look.
"""
