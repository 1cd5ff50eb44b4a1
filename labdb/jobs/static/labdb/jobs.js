// Job page: poll the job's JSON status and update state and progress without a reload.
(function () {
  "use strict";
  var box = document.getElementById("job");
  if (!box || !window.fetch) { return; }
  var url = box.getAttribute("data-status-url");
  var delayMs = 1500;

  function text(id, value) {
    var el = document.getElementById(id);
    if (el) { el.textContent = value; }
  }
  function when(iso) { return iso ? iso.replace("T", " ").slice(0, 19) : "not yet"; }

  function show(s) {
    text("job-state", s.state);
    var bar = document.getElementById("job-progress");
    if (bar) {
      if (s.percent === null) { bar.removeAttribute("value"); } else { bar.value = s.percent; }
    }
    text("job-count", s.total ? s.done + " / " + s.total : "");
    text("job-started", when(s.started_at));
    text("job-finished", when(s.finished_at));
    text("job-attempts", String(s.attempts));
    var err = document.getElementById("job-error");
    if (err) { err.hidden = !s.error; err.textContent = s.error || ""; }
  }

  // The result table is rendered by the server: fetch this page once more and swap it in.
  function refreshResult() {
    fetch(window.location.href, { credentials: "same-origin" })
      .then(function (r) { return r.text(); })
      .then(function (html) {
        var fresh = new DOMParser().parseFromString(html, "text/html").getElementById("job-result");
        var here = document.getElementById("job-result");
        if (fresh && here) { here.replaceWith(fresh); }
      });
  }

  function poll() {
    fetch(url, { credentials: "same-origin", headers: { "Accept": "application/json" } })
      .then(function (r) { if (!r.ok) { throw new Error(r.status); } return r.json(); })
      .then(function (s) {
        show(s);
        if (s.finished) { refreshResult(); } else { window.setTimeout(poll, delayMs); }
      })
      .catch(function () { window.setTimeout(poll, delayMs * 4); });
  }
  if (box.getAttribute("data-finished") !== "1") { window.setTimeout(poll, delayMs); }
})();
