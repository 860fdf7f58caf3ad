/* Browser-side parts of the page (layouts/page.py, layouts/cards.py, server/callbacks.py):
   chips that open and close their cards, a panel's controls passed on to the link, the panel
   tabs (role=tab, roving tabindex, arrow keys), and "copy link". None of them needs the
   server. */
(function () {
  "use strict";
  var noUpdate = function () { return window.dash_clientside.no_update; };

  function classes(text) { return (text || "").split(/\s+/).filter(Boolean); }

  var fd = {
    // The slot shells' classes (SHELL_CLASSES in layouts/cards.py): a chip click opens its card
    // and closes the others (a second click closes it); the server's {"filled", "open"} says
    // which slots hold a model and which card to open (one just added, copied or preset).
    // Second output: {"slot": n} when the card opened has not been built yet (BODY_CLASSES).
    shells: function (clicks, shells, names, ids, bodies) {
      var ctx = window.dash_clientside.callback_context;
      var trigger = ctx.triggered_id;
      var opened = names.map(function (n) { return classes(n).indexOf("fd-open") >= 0; });
      var filled = names.map(function (n) { return classes(n).indexOf("fd-empty") < 0; });
      if (trigger && trigger.type === "fd-chip") {
        var k = ids.map(function (id) { return id.slot; }).indexOf(trigger.slot);
        if (k < 0 || !filled[k]) { return [noUpdate(), noUpdate()]; }
        var now = !opened[k];
        opened = opened.map(function () { return false; });
        opened[k] = now;
      } else if (shells) {
        filled = ids.map(function (id) { return shells.filled.indexOf(id.slot) >= 0; });
        opened = ids.map(function (id, i) {
          if (shells.open) { return id.slot === shells.open; }
          return opened[i] && filled[i];
        });
      } else {
        return [noUpdate(), noUpdate()];
      }
      var build = noUpdate();
      ids.forEach(function (id, i) {
        if (opened[i] && filled[i] && classes(bodies[i]).indexOf("fd-filled") < 0) { build = {slot: id.slot}; }
      });
      return [ids.map(function (id, i) {
        return !filled[i] ? "fd-slot fd-empty" : (opened[i] ? "fd-slot fd-open" : "fd-slot");
      }), build];
    },
    expanded: function (className) {
      return classes(className).indexOf("fd-open") >= 0 ? "true" : "false";
    },
    // a tab button clicked: its key becomes the open tab (the link follows through `sync`)
    pickTab: function () {
      var trigger = window.dash_clientside.callback_context.triggered_id;
      if (!trigger || !trigger.key) { return noUpdate(); }
      return trigger.key;
    },
    // a panel's own control changed (ids.panel_view): every such control's [view key, value]
    // for `sync`, which writes the link. Dash also calls this, naming a control as the trigger,
    // when a panel inserts its controls, and when a panel without controls replaces them:
    // `shown` ([one store] or none) holds the values they were built with (the link's), and
    // while every value is still that, nothing is passed on (done here, those calls cost no
    // round trip to the server).
    panelViews: function (values, ids, shown) {
      var built = shown && shown.length ? shown[0] : null;
      var text = function (v) { return v === null || v === undefined ? "" : String(v); };
      var changed = built && ids.some(function (id, i) { return text(built[id.key]) !== text(values[i]); });
      if (!changed) { return noUpdate(); }
      // `at`: the store's value differs every time, also when the same choice is made again
      // (after Back, say)
      return {pairs: ids.map(function (id, i) { return [id.key, values[i]]; }), at: Date.now()};
    },
    // the open tab: selected state, roving tabindex and style of every tab button
    tabState: function (tab, ids) {
      var selected = ids.map(function (id) { return id.key === tab ? "true" : "false"; });
      var index = ids.map(function (id) { return id.key === tab ? 0 : -1; });
      var names = ids.map(function (id) { return id.key === tab ? "fd-tab fd-tab-selected" : "fd-tab"; });
      return [selected, index, names];
    },
    copy: function (clicks, link) {
      if (!clicks || !link) { return noUpdate(); }
      var box = document.getElementById("fd-link-text");
      var fallback = function () {
        if (box) { box.focus(); box.select(); }
        try { return document.execCommand("copy") ? "link copied" : "press Ctrl+C to copy the selected link"; }
        catch (e) { return "press Ctrl+C to copy the selected link"; }
      };
      if (navigator.clipboard && window.isSecureContext) {
        return navigator.clipboard.writeText(link).then(function () { return "link copied"; }, fallback);
      }
      return fallback();
    }
  };
  window.dash_clientside = Object.assign({}, window.dash_clientside, {fd: fd});

  // dcc.Graph resizes every figure once right after its first drawing, and Plotly's resize is a
  // full redraw even when the size is what it was: on a four-figure panel that doubled the
  // drawing time. A resize that would not change the figure's size is skipped (Plotly sizes an
  // autosized figure to its element's computed width, and to its layout height when one is set).
  function unchanged(gd) {
    var full = gd && gd._fullLayout, layout = gd && gd.layout;
    if (!full || !layout || layout.autosize === false || layout.width) { return false; }
    var style = window.getComputedStyle(gd);
    var width = parseFloat(style.width), height = layout.height || parseFloat(style.height);
    return Math.round(width) === Math.round(full.width) && Math.round(height) === Math.round(full.height);
  }
  function patchResize(plotly) {
    var plots = plotly && plotly.Plots;
    if (!plots || !plots.resize || plots.resize.fdSkipsUnchanged) { return; }
    var resize = plots.resize;
    plots.resize = function (gd) {
      var el = typeof gd === "string" ? document.getElementById(gd) : gd;
      return unchanged(el) ? Promise.resolve(el) : resize.apply(this, arguments);
    };
    plots.resize.fdSkipsUnchanged = true;
  }
  // plotly.js runs after this file (a deferred script of the page, server.app.EAGER_SCRIPTS)
  // and sets window.Plotly itself
  if (window.Plotly) { patchResize(window.Plotly); } else {
    var loaded;
    Object.defineProperty(window, "Plotly", {configurable: true, enumerable: true,
      get: function () { return loaded; }, set: function (value) { loaded = value; patchResize(value); }});
  }

  // Arrow keys, Home and End move between the tabs and open the one reached (WAI-ARIA
  // Authoring Practices, "Tabs" pattern with automatic activation).
  document.addEventListener("keydown", function (event) {
    var tab = event.target.closest && event.target.closest("[role=tab]");
    if (!tab) { return; }
    var list = Array.prototype.slice.call(tab.parentNode.querySelectorAll("[role=tab]"));
    var i = list.indexOf(tab), next = null;
    if (event.key === "ArrowRight") { next = list[(i + 1) % list.length]; }
    else if (event.key === "ArrowLeft") { next = list[(i - 1 + list.length) % list.length]; }
    else if (event.key === "Home") { next = list[0]; }
    else if (event.key === "End") { next = list[list.length - 1]; }
    if (!next) { return; }
    event.preventDefault();
    next.focus();
    next.click();
  });

  // A click outside every slot closes the open card (through its chip, so the page's state follows).
  document.addEventListener("click", function (event) {
    if (!event.target.closest || event.target.closest(".fd-slot")) { return; }
    if (!document.body.contains(event.target)) { return; }  // a dropdown option removed on click
    var open = document.querySelector(".fd-slot.fd-open > .fd-chip");
    if (open) { open.click(); }
  });

  // AG Grid keeps empty row containers (full-width and sticky rows, unused here) marked as
  // rowgroups; a rowgroup must hold rows (WAI-ARIA 1.2), so the empty ones are made presentational.
  var EMPTY_GROUPS = ".ag-full-width-container, .ag-sticky-top-viewport, .ag-sticky-top-full-width-container, " +
    ".ag-sticky-bottom-viewport, .ag-sticky-bottom-full-width-container";
  function tidyGrids() {
    // a file input made by dcc.Upload has no id a label could name: it takes its box's text
    document.querySelectorAll(".fd-upload input[type=file]:not([aria-label])").forEach(function (input) {
      var box = input.closest(".fd-upload");
      input.setAttribute("aria-label", (box && box.textContent.trim()) || "choose a file");
    });
    document.querySelectorAll(EMPTY_GROUPS).forEach(function (el) {
      var empty = !el.querySelector("[role=row]");
      if (empty && el.getAttribute("role") === "rowgroup") { el.setAttribute("role", "presentation"); }
      else if (!empty && el.getAttribute("role") === "presentation") { el.setAttribute("role", "rowgroup"); }
    });
  }
  var pending = false;
  new MutationObserver(function () {
    if (pending) { return; }
    pending = true;
    window.requestAnimationFrame(function () { pending = false; tidyGrids(); });
  }).observe(document.documentElement, {childList: true, subtree: true});

  // Escape closes the card that holds the focus and gives the focus back to its chip.
  document.addEventListener("keydown", function (event) {
    if (event.key !== "Escape") { return; }
    var shell = event.target.closest && event.target.closest(".fd-slot.fd-open");
    if (!shell) { return; }
    var chip = shell.querySelector(".fd-chip");
    if (chip) { chip.click(); chip.focus(); }
  });
})();
