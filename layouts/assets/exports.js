/* Figure exports, drawn in the browser by plotly.js (nothing leaves the machine): the buttons
   under each figure carry data-fd-export = svg | png2 | png3 | slides (layouts/page.py). */
(function () {
  "use strict";
  var SLIDES = {width: 1600, height: 900, scale: 2, font: 22, title: 28, annotation: 18};

  function save(url, name) {
    var a = document.createElement("a");
    a.href = url;
    a.download = name;
    document.body.appendChild(a);
    a.click();
    a.remove();
  }

  function copy(value) { return JSON.parse(JSON.stringify(value)); }

  function slideLayout(layout) {
    var out = copy(layout);
    out.width = SLIDES.width;
    out.height = SLIDES.height;
    out.font = Object.assign({}, out.font, {size: SLIDES.font});
    if (out.title) { out.title.font = Object.assign({}, out.title.font, {size: SLIDES.title}); }
    if (out.hoverlabel) { delete out.hoverlabel; }
    (out.annotations || []).forEach(function (a) {
      a.font = Object.assign({}, a.font, {size: Math.max(SLIDES.annotation, (a.font && a.font.size) || 0)});
    });
    if (out.legend) { out.legend.font = Object.assign({}, out.legend.font, {size: SLIDES.font}); }
    out.margin = Object.assign({}, out.margin, {l: 110, b: 90, t: 80});
    return out;
  }

  // A set of small plots (one figure per model, layouts/page.py) is saved as one figure: each
  // plot's axes renamed (x -> x2, y -> y2, its overlay y2 -> y<n + 2>…) side by side, the set's
  // title on top, the plots' titles above them, and one legend entry per component and epoch.
  function rename(axis, i, n) {
    if (!axis) { return axis; }
    var letter = axis.charAt(0), k = parseInt(axis.slice(1) || "1", 10);
    var index = k === 1 ? i + 1 : n + i + 1;  // the main axes, then the overlays
    return letter + (index === 1 ? "" : String(index));
  }

  function combine(gds, title) {
    var n = gds.length, gap = 0.03, share = (1 - gap * (n - 1)) / n;
    var layout = copy(gds[0].layout), data = [], legend = {};
    Object.keys(layout).forEach(function (k) { if (/^[xy]axis[0-9]*$/.test(k)) { delete layout[k]; } });
    layout.title = {text: title, x: 0.01, xanchor: "left", font: layout.title && layout.title.font};
    layout.annotations = [];
    layout.showlegend = true;
    layout.legend = {orientation: "h", x: 0, y: -0.22, yanchor: "top"};
    layout.margin = Object.assign({}, layout.margin, {t: 80, b: 130});
    Array.prototype.forEach.call(gds, function (gd, i) {
      var x0 = i * (share + gap), own = gd.layout;
      Object.keys(own).forEach(function (k) {
        var m = /^([xy])axis([0-9]*)$/.exec(k);
        if (!m) { return; }
        var axis = copy(own[k]), name = rename(m[1] + (m[2] || ""), i, n);
        if (m[1] === "x") { axis.domain = [x0, x0 + share]; axis.anchor = rename("y", i, n); }
        else if (axis.overlaying) { axis.overlaying = rename(axis.overlaying, i, n); }
        else {
          axis.anchor = rename("x", i, n);
          // the plots share their scales: the first one's y labels serve all (as on screen, each
          // plot's own would run into its left neighbour)
          if (i > 0) { axis.showticklabels = false; axis.title = {text: ""}; }
        }
        layout[name.charAt(0) + "axis" + name.slice(1)] = axis;
      });
      layout.annotations.push({text: (own.title && own.title.text) || "", xref: "paper", yref: "paper",
                               x: x0 + share / 2, y: 1.0, yanchor: "bottom", showarrow: false});
      (own.annotations || []).forEach(function (a) {
        var b = copy(a);
        if (b.xref && b.xref !== "paper") { b.xref = rename(b.xref, i, n); }
        if (b.yref && b.yref !== "paper") { b.yref = rename(b.yref, i, n); }
        layout.annotations.push(b);
      });
      gd.data.forEach(function (t) {
        var group = t.legendgroup || t.name;
        data.push(Object.assign({}, t, {xaxis: rename(t.xaxis || "x", i, n), yaxis: rename(t.yaxis || "y", i, n),
                                        showlegend: !legend[group]}));
        legend[group] = true;
      });
    });
    return {data: data, layout: layout};
  }

  // the figure to save from a figure box, and its size on screen
  function figureOf(box) {
    var gds = box.querySelectorAll(".js-plotly-plot"), full = gds[0]._fullLayout || {};
    if (gds.length > 1) {
      var row = box.querySelector(".fd-multiples-row") || box;
      return {figure: combine(gds, box.getAttribute("data-fd-title") || ""),
              width: Math.round(row.getBoundingClientRect().width) || 1200, height: (full.height || 330) + 110};
    }
    return {figure: {data: gds[0].data, layout: copy(gds[0].layout)}, width: full.width || 900,
            height: full.height || 450};
  }

  function draw(box, kind) {
    var shown = figureOf(box), figure = shown.figure, width = shown.width, height = shown.height;
    var options;
    if (kind === "svg") { options = {format: "svg", width: width, height: height, scale: 1}; }
    else if (kind === "png2" || kind === "png3") {
      options = {format: "png", width: width, height: height, scale: kind === "png2" ? 2 : 3};
    } else {
      figure.layout = slideLayout(figure.layout);
      options = {format: "png", width: SLIDES.width, height: SLIDES.height, scale: SLIDES.scale};
    }
    return window.Plotly.toImage(figure, options).then(function (url) {
      return {url: url, ext: options.format === "svg" ? "svg" : "png"};
    });
  }

  document.addEventListener("click", function (event) {
    var button = event.target.closest && event.target.closest("[data-fd-export]");
    if (!button) { return; }
    var box = button.closest(".fd-figure");
    if (!box || !box.querySelector(".js-plotly-plot") || !window.Plotly) { return; }
    var kind = button.getAttribute("data-fd-export");
    var name = box.getAttribute("data-fd-name") || "figure";
    button.disabled = true;
    draw(box, kind).then(function (out) {
      window.fdExport.save(out.url, name + (kind === "slides" ? "-slides" : kind === "svg" ? "" : "-" + kind) + "." + out.ext);
    }).catch(function (err) {
      window.console && console.warn("export failed: " + err);
    }).then(function () { button.disabled = false; });
  });

  // tests replace `save` to catch the file instead of downloading it
  window.fdExport = {save: save, draw: draw, SLIDES: SLIDES};
})();
