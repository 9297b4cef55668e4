// Draws every chart on the page from its JSON data block (no inline scripts: CSP).
(function () {
  "use strict";
  function draw() {
    document.querySelectorAll("[data-chart]").forEach(function (el) {
      var source = document.getElementById(el.getAttribute("data-chart"));
      if (!source || typeof Plotly === "undefined") { return; }
      var fig = JSON.parse(source.textContent);
      Plotly.newPlot(el, fig.data, fig.layout, { responsive: true, displaylogo: false })
        .then(function () { el.setAttribute("data-drawn", "true"); });
    });
  }
  if (document.readyState === "loading") {
    document.addEventListener("DOMContentLoaded", draw);
  } else {
    draw();
  }
})();
