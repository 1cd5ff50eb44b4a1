// Draw every chart on the page from its JSON data block; no inline scripts anywhere.
(function () {
  "use strict";
  function draw() {
    document.querySelectorAll("[data-chart]").forEach(function (el) {
      var src = document.getElementById(el.getAttribute("data-chart"));
      if (!src || !window.Plotly) { return; }
      var fig = JSON.parse(src.textContent);
      var config = Object.assign({ responsive: true, displaylogo: false }, fig.config || {});
      window.Plotly.newPlot(el, fig.data, fig.layout, config);
    });
  }
  if (document.readyState === "loading") {
    document.addEventListener("DOMContentLoaded", draw);
  } else {
    draw();
  }
})();
