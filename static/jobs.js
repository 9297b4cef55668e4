// Live progress of a background job: server-sent events, or polling where they are missing.
(function () {
  "use strict";
  var box = document.getElementById("job");
  if (!box) { return; }
  var bar = document.getElementById("job-progress");
  var count = document.getElementById("job-count");
  var status = document.getElementById("job-status");
  var error = document.getElementById("job-error");
  var done = document.getElementById("job-done");

  function show(job) {
    bar.max = job.progress_total || 1;
    bar.value = job.status === "done" ? bar.max : job.progress_done;
    bar.textContent = Math.round(100 * job.progress_frac) + " %";
    count.textContent = job.progress_done + " / " + job.progress_total;
    status.textContent = job.status;
    if (job.error) { error.textContent = job.error; error.hidden = false; }
    var finished = job.status === "done" || job.status === "failed";
    done.hidden = !finished;
    box.setAttribute("data-finished", finished ? "true" : "false");
    return finished;
  }

  function poll() {
    fetch(box.getAttribute("data-job-json"), { headers: { Accept: "application/json" } })
      .then(function (r) { return r.json(); })
      .then(function (job) { if (!show(job)) { setTimeout(poll, 1000); } })
      .catch(function () { setTimeout(poll, 3000); });
  }

  if (status.textContent === "done" || status.textContent === "failed") { return; }
  if (typeof EventSource === "undefined") { poll(); return; }
  var source = new EventSource(box.getAttribute("data-job-events"));
  source.addEventListener("progress", function (e) {
    if (show(JSON.parse(e.data))) { source.close(); }
  });
  source.onerror = function () { source.close(); poll(); };
})();
