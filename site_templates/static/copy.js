// Entry pages: copy buttons for citations (shown only when the clipboard can be used; the text
// stays selectable) and unfolded details when printing.
(function () {
  "use strict";
  // Printing shows the folded details (metric components, T^a_b) too.
  window.addEventListener("beforeprint", function () {
    document.querySelectorAll("details").forEach(function (d) { d.open = true; });
  });
  if (!navigator.clipboard) { return; }
  document.querySelectorAll("button.copy").forEach(function (button) {
    var source = document.getElementById(button.getAttribute("data-copy"));
    if (!source) { return; }
    var label = button.textContent;
    button.hidden = false;
    button.addEventListener("click", function () {
      navigator.clipboard.writeText(source.textContent).then(function () {
        button.textContent = "Copied";
        window.setTimeout(function () { button.textContent = label; }, 1500);
      }, function () {
        button.textContent = "Select the text and copy it";
      });
    });
  });
})();
