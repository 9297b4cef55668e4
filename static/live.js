// Pages that wait for background jobs follow them by themselves (issue 16): one server-sent
// event stream per page (/api/jobs/events?id=..&id=..), polling where EventSource is missing.
//
// A box [data-live-jobs="<ids>"][data-events="<url>"][data-jobs-api="/api/jobs/"] (the macro in
// templates/_live_jobs.html writes them) holds, per job, an element
// [data-job-id] with [data-job-status], [data-job-count] and <progress> to update. When every
// job has finished the box gets data-finished="true", shows its [data-when-finished] parts and
// hides its [data-while-running] ones; with data-reload-when-finished the page reloads to show
// the new results, unless the person has started typing in one of its forms.
(function () {
  "use strict";
  var editing = false;
  document.addEventListener("input", function (e) {
    if (e.target.form) { editing = true; }
  });

  function setText(root, selector, text) {
    root.querySelectorAll(selector).forEach(function (el) { el.textContent = text; });
  }

  function watch(box) {
    var open = {};
    box.getAttribute("data-live-jobs").split(/\s+/).forEach(function (id) {
      if (id) { open[id] = true; }
    });
    var source = null;
    var done = false;

    function finished() {
      if (done) { return; }
      done = true;
      if (source) { source.close(); }
      box.setAttribute("data-finished", "true");
      box.querySelectorAll("[data-while-running]").forEach(function (el) { el.hidden = true; });
      box.querySelectorAll("[data-when-finished]").forEach(function (el) { el.hidden = false; });
      if (box.hasAttribute("data-reload-when-finished") && !editing) { location.reload(); }
    }

    function show(job) {
      box.querySelectorAll('[data-job-id="' + job.id + '"]').forEach(function (row) {
        row.setAttribute("data-status", job.status);
        setText(row, "[data-job-status]", job.status);
        setText(row, "[data-job-count]", job.progress_done + " / " + job.progress_total);
        row.querySelectorAll("progress").forEach(function (bar) {
          bar.max = job.progress_total || 1;
          bar.value = job.status === "done" ? bar.max : job.progress_done;
        });
      });
      if (job.status === "done" || job.status === "failed") { delete open[String(job.id)]; }
      if (Object.keys(open).length === 0) { finished(); }
    }

    function poll() {
      Object.keys(open).forEach(function (id) {
        fetch(box.getAttribute("data-jobs-api") + id, { headers: { Accept: "application/json" } })
          .then(function (r) { return r.json(); })
          .then(show)
          .catch(function () { /* try again below */ });
      });
      if (!done) { setTimeout(poll, 2000); }
    }

    if (Object.keys(open).length === 0) { finished(); return; }
    if (typeof EventSource === "undefined") { poll(); return; }
    source = new EventSource(box.getAttribute("data-events"));
    source.addEventListener("progress", function (e) { show(JSON.parse(e.data)); });
    source.onerror = function () {
      if (source.readyState === EventSource.CLOSED && !done) { poll(); }
    };
  }

  function start() { document.querySelectorAll("[data-live-jobs]").forEach(watch); }
  if (document.readyState === "loading") {
    document.addEventListener("DOMContentLoaded", start);
  } else {
    start();
  }
})();
