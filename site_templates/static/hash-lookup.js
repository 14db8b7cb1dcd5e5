// Filters the revision table by a content-hash prefix; the prefix is kept in the URL (?hash=).
(function () {
  "use strict";
  var input = document.getElementById("hash-query");
  var table = document.getElementById("hash-table");
  var count = document.getElementById("hash-count");
  if (!input || !table) { return; }
  var rows = Array.prototype.slice.call(table.tBodies[0].rows);

  function apply() {
    var prefix = input.value.trim().toLowerCase();
    var shown = 0;
    rows.forEach(function (row) {
      var match = row.getAttribute("data-hash").indexOf(prefix) === 0;
      row.hidden = !match;
      if (match) { shown += 1; }
    });
    count.textContent = shown + (shown === 1 ? " revision matches." : " revisions match.");
    var url = new URL(window.location.href);
    if (prefix) { url.searchParams.set("hash", prefix); } else { url.searchParams.delete("hash"); }
    window.history.replaceState(null, "", url.toString());
  }

  input.value = new URLSearchParams(window.location.search).get("hash") || "";
  input.addEventListener("input", apply);
  document.getElementById("hash-form").addEventListener("submit", function (event) {
    event.preventDefault();
  });
  if (input.value) { apply(); }
}());
