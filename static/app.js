// Every page: wide tables scroll sideways inside their own box (first column kept in view by
// CSS) instead of widening the page; folded sections (details.fold) open when a link points
// into them, before printing, and (data-remember) as the person left them on this page.
// No inline scripts (CSP): this file is loaded by base.html.
(function () {
  "use strict";
  function wrapTables() {
    document.querySelectorAll("table.grid").forEach(function (table) {
      if (table.parentElement.classList.contains("table-scroll")) { return; }
      var box = document.createElement("div");
      box.className = "table-scroll";
      table.parentNode.insertBefore(box, table);
      box.appendChild(table);
    });
  }

  function foldKey(details) { return "fold:" + location.pathname + "#" + details.id; }

  function rememberFolds() {
    document.querySelectorAll("details.fold[data-remember][id]").forEach(function (d) {
      try {
        var saved = sessionStorage.getItem(foldKey(d));
        if (saved === "open") { d.open = true; }
        d.addEventListener("toggle", function () {
          sessionStorage.setItem(foldKey(d), d.open ? "open" : "closed");
        });
      } catch (e) { /* storage refused: folds simply start closed */ }
    });
  }

  function openTarget() {
    var id = decodeURIComponent(location.hash.slice(1));
    var target = id && document.getElementById(id);
    if (!target) { return; }
    for (var d = target.closest("details"); d; d = d.parentElement.closest("details")) { d.open = true; }
    target.scrollIntoView();
  }

  var openedForPrint = [];
  window.addEventListener("beforeprint", function () {
    openedForPrint = Array.prototype.filter.call(document.querySelectorAll("details.fold"), function (d) {
      return !d.open;
    });
    openedForPrint.forEach(function (d) { d.open = true; });
  });
  window.addEventListener("afterprint", function () {
    openedForPrint.forEach(function (d) { d.open = false; });
    openedForPrint = [];
  });

  function ready() {
    wrapTables();
    rememberFolds();
    if (location.hash) { openTarget(); }
    window.addEventListener("hashchange", openTarget);
  }
  if (document.readyState === "loading") {
    document.addEventListener("DOMContentLoaded", ready);
  } else {
    ready();
  }
})();
