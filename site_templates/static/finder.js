// Finder: instant search and filters over the embedded index (window.ALMANAC_INDEX).
// No network access, so it works from file:// as well as from a server. The state lives in the
// URL hash (#q=...&family=...) so a search can be shared.
(function () {
  "use strict";
  var index = window.ALMANAC_INDEX || [];
  var form = document.getElementById("finder");
  var query = document.getElementById("q");
  var status = document.getElementById("finder-status");
  var filters = {
    family: document.getElementById("f-family"),
    dimension: document.getElementById("f-dimension"),
    matter: document.getElementById("f-matter"),
    petrov: document.getElementById("f-petrov"),
    evidence: document.getElementById("f-evidence"),
    isometry: document.getElementById("f-isometry"),
    tag: document.getElementById("f-tag")
  };
  if (!form || !query) { return; }

  function fold(text) {
    return String(text).toLowerCase().normalize("NFKD").replace(/[\u0300-\u036f]/g, "")
      .replace(/[\u2010-\u2015]/g, "-");
  }

  var haystacks = {};
  index.forEach(function (item) {
    haystacks[item.id] = fold([item.id, item.title, item.chart, item.summary, item.family_title,
      item.matter_label, item.tags.join(" "), item.authors.join(" "), item.years.join(" "),
      item.petrov ? "petrov " + item.petrov : ""].join(" \u0001 "));
  });

  function matches(item, words, chosen) {
    if (chosen.family && item.family !== chosen.family) { return false; }
    if (chosen.dimension && String(item.dimension) !== chosen.dimension) { return false; }
    if (chosen.matter && item.matter !== chosen.matter) { return false; }
    if (chosen.petrov && item.petrov !== chosen.petrov) { return false; }
    if (chosen.evidence && item.evidence !== chosen.evidence) { return false; }
    if (chosen.isometry && item.isometry !== chosen.isometry) { return false; }
    if (chosen.tag && item.tags.indexOf(chosen.tag) < 0) { return false; }
    var hay = haystacks[item.id];
    return words.every(function (word) { return hay.indexOf(word) >= 0; });
  }

  function currentChoice() {
    var chosen = {};
    Object.keys(filters).forEach(function (key) { chosen[key] = filters[key] ? filters[key].value : ""; });
    return chosen;
  }

  function writeHash(chosen) {
    var params = new URLSearchParams();
    if (query.value.trim()) { params.set("q", query.value.trim()); }
    Object.keys(chosen).forEach(function (key) { if (chosen[key]) { params.set(key, chosen[key]); } });
    var text = params.toString();
    var url = window.location.pathname + window.location.search + (text ? "#" + text : "");
    try { window.history.replaceState(null, "", url); } catch (e) { window.location.hash = text; }
  }

  function apply(updateHash) {
    var chosen = currentChoice();
    var words = fold(query.value).split(/\s+/).filter(Boolean);
    var shown = 0;
    index.forEach(function (item) {
      var card = document.getElementById("card-" + item.id);
      if (!card) { return; }
      var visible = matches(item, words, chosen);
      card.hidden = !visible;
      if (visible) { shown += 1; }
    });
    status.textContent = shown === index.length ? index.length + " entries." :
      shown + " of " + index.length + " entries match.";
    if (updateHash) { writeHash(chosen); }
  }

  function readHash() {
    var text = window.location.hash.replace(/^#/, "") || window.location.search.replace(/^\?/, "");
    var params = new URLSearchParams(text);
    query.value = params.get("q") || "";
    Object.keys(filters).forEach(function (key) {
      var select = filters[key];
      var wanted = params.get(key) || "";
      if (select && Array.prototype.some.call(select.options, function (o) { return o.value === wanted; })) {
        select.value = wanted;
      }
    });
  }

  form.addEventListener("submit", function (event) { event.preventDefault(); apply(true); });
  form.addEventListener("reset", function () { window.setTimeout(function () { apply(true); }, 0); });
  query.addEventListener("input", function () { apply(true); });
  Object.keys(filters).forEach(function (key) {
    if (filters[key]) { filters[key].addEventListener("change", function () { apply(true); }); }
  });
  window.addEventListener("hashchange", function () { readHash(); apply(false); });
  readHash();
  apply(false);
})();
