// Draws every chart on the page from its JSON data block (no inline scripts: CSP).
(function () {
  "use strict";
  // The chart toolbar: the few buttons an engineer uses, no logo, and nothing that sends the
  // figure anywhere (plotly's stock toolbar has a "share" button that uploads it to a public
  // cloud service; reserves data stay in the building).
  var CONFIG = {
    responsive: true,
    displaylogo: false,
    showSendToCloud: false,
    plotlyServerURL: "",
    modeBarButtons: [["toImage", "zoom2d", "resetScale2d"]],
    toImageButtonOptions: { format: "png", scale: 2 }
  };

  // A chart is one stop in the tab order and its toolbar is not in the order at all, so
  // five charts cost five stops, not fifty. On a focused chart, Enter (or the right arrow)
  // moves into its toolbar; arrows move along it, Escape goes back to the chart, Tab moves on.
  var HINT = "Enter reaches its tools: download image, zoom, reset";

  function buttons(el) { return Array.prototype.slice.call(el.querySelectorAll(".modebar-btn")); }

  function outOfTabOrder(el) {
    buttons(el).forEach(function (b) { b.tabIndex = -1; });
    var bar = el.querySelector(".modebar");
    if (bar) { bar.setAttribute("role", "toolbar"); bar.setAttribute("aria-label", "Chart tools"); }
  }

  function onKey(el, e) {
    var list = buttons(el);
    var at = list.indexOf(document.activeElement);
    var go = null;
    if (document.activeElement === el) {
      if (e.key === "Enter" || e.key === "ArrowRight") { go = 0; }
    } else if (at >= 0) {
      if (e.key === "ArrowRight" || e.key === "ArrowDown") { go = (at + 1) % list.length; }
      if (e.key === "ArrowLeft" || e.key === "ArrowUp") { go = (at - 1 + list.length) % list.length; }
      if (e.key === "Home") { go = 0; }
      if (e.key === "End") { go = list.length - 1; }
      if (e.key === "Escape") { e.preventDefault(); el.focus(); return; }
    }
    if (go !== null && list.length) { e.preventDefault(); list[go].focus(); }
  }

  function keyboardReady(el) {
    if (!el.hasAttribute("tabindex")) { el.tabIndex = 0; }
    if (el.getAttribute("role") === "img") {
      // an image's content is hidden from screen readers: a labelled group keeps the toolbar
      el.setAttribute("role", "group");
      el.setAttribute("aria-roledescription", "chart");
    }
    el.setAttribute("aria-description", HINT);
    outOfTabOrder(el);
    el.on("plotly_afterplot", function () { outOfTabOrder(el); });
    el.addEventListener("keydown", function (e) { onKey(el, e); });
  }

  function draw() {
    document.querySelectorAll("[data-chart]").forEach(function (el) {
      var source = document.getElementById(el.getAttribute("data-chart"));
      if (!source || typeof Plotly === "undefined") { return; }
      var fig = JSON.parse(source.textContent);
      Plotly.newPlot(el, fig.data, fig.layout, CONFIG).then(function () {
        keyboardReady(el);
        el.setAttribute("data-drawn", "true");
      });
    });
  }
  if (document.readyState === "loading") {
    document.addEventListener("DOMContentLoaded", draw);
  } else {
    draw();
  }
})();
