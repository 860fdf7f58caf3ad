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

  function draw(gd, kind) {
    var full = gd._fullLayout || {};
    var width = full.width || 900, height = full.height || 450;
    var figure = {data: gd.data, layout: copy(gd.layout)};
    var options;
    if (kind === "svg") { options = {format: "svg", width: width, height: height, scale: 1}; }
    else if (kind === "png2" || kind === "png3") {
      options = {format: "png", width: width, height: height, scale: kind === "png2" ? 2 : 3};
    } else {
      figure.layout = slideLayout(gd.layout);
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
    var gd = box && box.querySelector(".js-plotly-plot");
    if (!gd || !window.Plotly) { return; }
    var kind = button.getAttribute("data-fd-export");
    var name = box.getAttribute("data-fd-name") || "figure";
    button.disabled = true;
    draw(gd, kind).then(function (out) {
      window.fdExport.save(out.url, name + (kind === "slides" ? "-slides" : kind === "svg" ? "" : "-" + kind) + "." + out.ext);
    }).catch(function (err) {
      window.console && console.warn("export failed: " + err);
    }).then(function () { button.disabled = false; });
  });

  // tests replace `save` to catch the file instead of downloading it
  window.fdExport = {save: save, draw: draw, SLIDES: SLIDES};
})();
