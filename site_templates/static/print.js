// Printing shows everything: closed <details> blocks (metric components, T^a_b) are opened
// for the printout and closed again afterwards, since CSS alone cannot open them everywhere.
(function () {
  "use strict";
  var opened = [];
  window.addEventListener("beforeprint", function () {
    opened = Array.prototype.filter.call(document.querySelectorAll("details"), function (d) {
      return !d.open;
    });
    opened.forEach(function (d) { d.open = true; });
  });
  window.addEventListener("afterprint", function () {
    opened.forEach(function (d) { d.open = false; });
    opened = [];
  });
})();
