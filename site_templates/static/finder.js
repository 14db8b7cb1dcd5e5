// Finder: search and filters over the lunr index built at build time (window.ALMANAC_SEARCH,
// see generator/site/search.py) and the card data (window.ALMANAC_INDEX). No network access,
// so it works from file:// as well as from a server. The state lives in the URL hash
// (#q=...&family=...) so a search can be shared.
//
// A query is read in three steps: it is folded exactly as the index was (lower case, accents
// dropped, Greek letters spelt out, other characters separators); phrases that name a property
// of the trade ("Petrov type D", "type D", "5D", "dimension 5", "vacuum", "Λ-vacuum",
// "charged", "rotating") become filters; every remaining word must match a whole (stemmed)
// word of some field, or the start of one, and entries are ranked by lunr's field-boosted
// score (title > chart > tags > authors > summary > notes).
(function () {
  "use strict";
  var cards = window.ALMANAC_INDEX || [];
  var search = window.ALMANAC_SEARCH || null;
  var form = document.getElementById("finder");
  var query = document.getElementById("q");
  var status = document.getElementById("finder-status");
  var understood = document.getElementById("finder-understood");
  var list = document.querySelector("ol.cards");
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
  var idx = (search && search.index && window.lunr) ? window.lunr.Index.load(search.index) : null;
  var greek = (search && search.greek) || {};
  var synonyms = (search && search.synonyms) || {};
  var originalOrder = cards.map(function (item) { return item.id; });
  var byId = {};
  cards.forEach(function (item) { byId[item.id] = item; });

  function fold(text) {
    var lowered = String(text).toLowerCase().normalize("NFKD").replace(/[\u0300-\u036f]/g, "");
    var spelt = Array.prototype.map.call(lowered, function (ch) {
      return Object.prototype.hasOwnProperty.call(greek, ch) ? greek[ch] : ch;
    }).join("");
    return spelt.replace(/[^a-z0-9]+/g, " ").trim();
  }

  var PETROV = { "i": "I", "ii": "II", "iii": "III", "d": "D", "n": "N", "o": "O" };
  var MATTER_NAMES = { "lambda-vacuum": "Λ-vacuum", "electrovacuum": "electrovacuum",
    "vacuum": "vacuum", "perfect-fluid": "perfect fluid", "null-dust": "null dust" };
  // [pattern on the folded query, what it sets]; earlier rules take their words first.
  var PHRASES = [
    [/\bpetrov (?:type )?(iii|ii|i|d|n|o)\b/, function (m, f) { f.petrov = PETROV[m[1]]; }],
    [/\btype (iii|ii|i|d|n|o)\b/, function (m, f) { f.petrov = PETROV[m[1]]; }],
    [/\b(?:dimension|dimensions|dim) (\d{1,2})\b/, function (m, f) { f.dimension = m[1]; }],
    [/\b(\d{1,2}) ?(?:d|dimensional)\b/, function (m, f) { f.dimension = m[1]; }],
    [/\blambda vacuum\b/, function (m, f) { f.matter = "lambda-vacuum"; }],
    [/\belectro ?vacuum\b/, function (m, f) { f.matter = "electrovacuum"; }],
    [/\bvacuum\b/, function (m, f) { f.matter = "vacuum"; }],
    [/\bperfect fluid\b/, function (m, f) { f.matter = "perfect-fluid"; }],
    [/\bnull dust\b/, function (m, f) { f.matter = "null-dust"; }],
    [/\bcharged\b/, function (m, f) { f.tags.push("charged"); }],
    [/\b(?:rotating|spinning)\b/, function (m, f) { f.tags.push("rotating"); }]
  ];

  function readPhrases(folded) {
    var found = { tags: [] };
    var rest = " " + folded + " ";
    PHRASES.forEach(function (rule) {
      var match = rule[0].exec(rest);
      if (match) {
        rule[1](match, found);
        rest = rest.slice(0, match.index) + " " + rest.slice(match.index + match[0].length);
      }
    });
    rest = rest.trim();
    if (/^\d{1,2}$/.test(rest) && Number(rest) >= 2 && Number(rest) <= 11 && !found.dimension) {
      found.dimension = rest;  // a bare small number is a dimension, not a year or a page
      rest = "";
    }
    return { found: found, words: rest ? rest.split(" ") : [] };
  }

  function describe(found) {
    var parts = [];
    if (found.petrov) { parts.push("Petrov type " + found.petrov); }
    if (found.dimension) { parts.push(found.dimension + " dimensions"); }
    if (found.matter) { parts.push(MATTER_NAMES[found.matter] || found.matter); }
    found.tags.forEach(function (tag) { parts.push(tag); });
    return parts;
  }

  function isStopWord(word) {
    return window.lunr && window.lunr.stopWordFilter(new window.lunr.Token(word, {})) === undefined;
  }

  // Scores of the entries matching one word: the whole (stemmed) word, or its start.
  function wordScores(word, exact) {
    var scores = {};
    var results = idx.query(function (q) {
      q.term(word, { boost: 10 });
      if (word.length >= 3 && !exact) {
        q.term(word, { wildcard: window.lunr.Query.wildcard.TRAILING, usePipeline: false, boost: 1 });
      }
    });
    results.forEach(function (r) { scores[r.ref] = r.score; });
    return scores;
  }

  // A long form of the trade typed in full ("anti de sitter") is one term: the index holds
  // its short form ("ads") beside every field that contains the long form, so querying the
  // short form exactly ranks the phrase, not its words one by one ("anti" of anti-Nariai).
  function phraseWords(words) {
    var padded = " " + words.join(" ") + " ";
    var exact = {};
    Object.keys(synonyms).forEach(function (short) {
      var long = " " + synonyms[short] + " ";
      if (padded.indexOf(long) >= 0) {
        padded = padded.split(long).join(" " + short + " ");
        exact[short] = true;
      }
    });
    var out = padded.trim();
    return { words: out ? out.split(" ") : [], exact: exact };
  }

  // Entries matching the phrases first (as one term each), then those matching only the
  // words of the query (an author's surname that is also part of a long form).
  function rankedWithPhrases(words) {
    var phrased = phraseWords(words);
    var loose = ranked(words, {});
    if (phrased.words.join(" ") === words.join(" ")) { return loose; }
    var first = ranked(phrased.words, phrased.exact) || {};
    var scores = {};
    Object.keys(loose || {}).forEach(function (ref) { scores[ref] = loose[ref] / 1000; });
    Object.keys(first).forEach(function (ref) { scores[ref] = 1000 + first[ref]; });
    return scores;
  }

  function ranked(words, exact) {
    var total = null;
    words.filter(function (w) { return !isStopWord(w); }).forEach(function (word) {
      var scores = wordScores(word, Object.prototype.hasOwnProperty.call(exact, word));
      if (total === null) { total = scores; return; }
      var next = {};
      Object.keys(total).forEach(function (ref) {
        if (Object.prototype.hasOwnProperty.call(scores, ref)) { next[ref] = total[ref] + scores[ref]; }
      });
      total = next;
    });
    return total;  // null: no words, everything matches
  }

  function passes(item, chosen, found) {
    if (chosen.family && item.family !== chosen.family) { return false; }
    if (chosen.dimension && String(item.dimension) !== chosen.dimension) { return false; }
    if (chosen.matter && item.matter !== chosen.matter) { return false; }
    if (chosen.petrov && item.petrov !== chosen.petrov) { return false; }
    if (chosen.evidence && item.evidence !== chosen.evidence) { return false; }
    if (chosen.isometry && item.isometry !== chosen.isometry) { return false; }
    if (chosen.tag && item.tags.indexOf(chosen.tag) < 0) { return false; }
    if (found.petrov && item.petrov !== found.petrov) { return false; }
    if (found.dimension && String(item.dimension) !== found.dimension) { return false; }
    if (found.matter && item.matter !== found.matter) { return false; }
    return found.tags.every(function (tag) { return item.tags.indexOf(tag) >= 0; });
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
    var reading = readPhrases(fold(query.value));
    var scores = (idx && reading.words.length) ? rankedWithPhrases(reading.words) : null;
    var order = originalOrder.slice();
    if (scores) {
      order.sort(function (a, b) {
        var sa = scores[a] || 0, sb = scores[b] || 0;
        return sb !== sa ? sb - sa : originalOrder.indexOf(a) - originalOrder.indexOf(b);
      });
    }
    var shown = 0;
    order.forEach(function (id) {
      var card = document.getElementById("card-" + id);
      if (!card) { return; }
      var visible = passes(byId[id], chosen, reading.found) &&
        (scores === null || Object.prototype.hasOwnProperty.call(scores, id));
      card.hidden = !visible;
      if (list) { list.appendChild(card); }
      if (visible) { shown += 1; }
    });
    status.textContent = shown === cards.length ? cards.length + " entries." :
      shown + " of " + cards.length + " entries match.";
    if (understood) {
      var parts = describe(reading.found);
      understood.textContent = parts.length ? "Read as: " + parts.join(" · ") +
        (reading.words.length ? " · words: " + reading.words.join(" ") : "") : "";
    }
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

  window.almanacFinder = { fold: fold, readPhrases: readPhrases };  // for tests and the console

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
