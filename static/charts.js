// Tap a series (its line or its legend entry) to see its values: opens the chart's table of
// numbers and marks that series' table. The tables are there without script too.
(function () {
  "use strict";
  function show(figure, name) {
    var details = figure.querySelector("details.chart-numbers");
    if (!details) { return; }
    details.open = true;
    var tables = details.querySelectorAll("table");
    var picked = null;
    for (var i = 0; i < tables.length; i++) {
      var caption = tables[i].querySelector("caption");
      var match = caption && caption.textContent.trim() === name;
      tables[i].classList.toggle("picked", !!match);
      if (match) { picked = tables[i]; }
    }
    (picked || details).scrollIntoView({ block: "nearest", behavior: "smooth" });
  }
  var figures = document.querySelectorAll("figure.chart");
  for (var i = 0; i < figures.length; i++) {
    figures[i].addEventListener("click", function (event) {
      var target = event.target.closest("[data-series]");
      if (target) { show(event.currentTarget, target.getAttribute("data-series")); }
    });
  }
})();
