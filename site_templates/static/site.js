/* aerialbook site behaviour: table filters with live counts, sortable columns, in-browser search.
   Everything here is an enhancement: with JavaScript off every page still shows all its content. */
(function () {
  "use strict";

  function norm(text) {
    return (text || "").toLocaleLowerCase().normalize("NFKD").replace(/[\u0300-\u036f]/g, "");
  }

  /* ---------- sortable tables: <table data-sortable>, <th data-sort="text|num"> ---------- */
  function cellValue(row, index, kind) {
    var cell = row.cells[index];
    if (kind === "unit") {  /* by unit first, then by value: values of different units are never compared */
      return [cell ? norm(cell.getAttribute("data-unit")) : "", cellValue(row, index, "num")];
    }
    if (!cell) { return kind === "num" ? -Infinity : ""; }
    var raw = cell.hasAttribute("data-value") ? cell.getAttribute("data-value") : cell.textContent.trim();
    if (kind === "num") {
      var number = parseFloat(raw);
      return isNaN(number) ? -Infinity : number;
    }
    return norm(raw);
  }

  function compare(x, y) {
    if (Array.isArray(x)) {
      for (var i = 0; i < x.length; i += 1) {
        var part = compare(x[i], y[i]);
        if (part !== 0) { return part; }
      }
      return 0;
    }
    return x < y ? -1 : x > y ? 1 : 0;
  }

  function makeSortable(table) {
    var headers = table.tHead ? table.tHead.rows[0].cells : [];
    Array.prototype.forEach.call(headers, function (th, index) {
      var kind = th.getAttribute("data-sort");
      if (!kind) { return; }
      var button = document.createElement("button");
      button.type = "button";
      button.className = "sort";
      while (th.firstChild) { button.appendChild(th.firstChild); }
      th.appendChild(button);
      th.setAttribute("aria-sort", "none");
      button.addEventListener("click", function () {
        var ascending = th.getAttribute("aria-sort") !== "ascending";
        Array.prototype.forEach.call(headers, function (other) {
          if (other.hasAttribute("aria-sort")) { other.setAttribute("aria-sort", "none"); }
        });
        th.setAttribute("aria-sort", ascending ? "ascending" : "descending");
        var body = table.tBodies[0];
        var rows = Array.prototype.slice.call(body.rows);
        rows.forEach(function (row, position) { row.setAttribute("data-order", String(position)); });
        rows.sort(function (a, b) {
          var x = cellValue(a, index, kind), y = cellValue(b, index, kind);
          var result = compare(x, y);
          if (result === 0) {
            result = Number(a.getAttribute("data-order")) - Number(b.getAttribute("data-order"));
            return result;
          }
          return ascending ? result : -result;
        });
        rows.forEach(function (row) { body.appendChild(row); });
      });
    });
  }

  /* ---------- filtered tables: <form data-filter-for="table id"> with <select name="..."> ---------- */
  function readHash() {
    var wanted = {};
    (location.hash || "").replace(/^#/, "").split("&").forEach(function (part) {
      var pair = part.split("=");
      if (pair.length === 2 && pair[0]) {
        wanted[decodeURIComponent(pair[0])] = decodeURIComponent(pair[1]);
      }
    });
    return wanted;
  }

  function setupFilters(form) {
    var table = document.getElementById(form.getAttribute("data-filter-for"));
    if (!table) { return; }
    var rows = Array.prototype.slice.call(table.tBodies[0].rows);
    var selects = Array.prototype.slice.call(form.querySelectorAll("select"));
    var shownOut = document.querySelector("[data-count='shown']");
    var emptyNote = document.querySelector("[data-empty-for='" + table.id + "']");
    var wanted = readHash();

    selects.forEach(function (select) {
      if (wanted[select.name] !== undefined) {
        var ok = Array.prototype.some.call(select.options, function (o) { return o.value === wanted[select.name]; });
        if (ok) { select.value = wanted[select.name]; }
      }
    });

    function matches(row, select) {
      if (!select.value) { return true; }
      var have = (row.getAttribute("data-" + select.name) || "").split(" ");
      return have.indexOf(select.value) !== -1;
    }

    function apply() {
      var shown = 0;
      var bySeverity = {};
      var byState = {};
      rows.forEach(function (row) {
        var visible = selects.every(function (select) { return matches(row, select); });
        row.hidden = !visible;
        if (visible) {
          shown += 1;
          var sev = row.getAttribute("data-severity");
          var state = (row.getAttribute("data-state") || "").split(" ")[0];
          bySeverity[sev] = (bySeverity[sev] || 0) + 1;
          byState[state] = (byState[state] || 0) + 1;
        }
      });
      if (shownOut) { shownOut.textContent = String(shown); }
      document.querySelectorAll("[data-count-severity]").forEach(function (out) {
        out.textContent = String(bySeverity[out.getAttribute("data-count-severity")] || 0);
      });
      document.querySelectorAll("[data-count-state]").forEach(function (out) {
        out.textContent = String(byState[out.getAttribute("data-count-state")] || 0);
      });
      if (emptyNote) { emptyNote.hidden = shown !== 0; }
      var also = document.getElementById(form.getAttribute("data-also-filter") || "");
      if (also) {  /* rows with some of the attributes (stale reviews: aircraft) follow those filters */
        Array.prototype.forEach.call(also.tBodies[0].rows, function (row) {
          row.hidden = !selects.every(function (select) {
            return !row.hasAttribute("data-" + select.name) || matches(row, select);
          });
        });
      }
      var parts = selects.filter(function (s) { return s.value; }).map(function (s) {
        return encodeURIComponent(s.name) + "=" + encodeURIComponent(s.value);
      });
      var hash = parts.length ? "#" + parts.join("&") : "";
      if (history.replaceState && location.hash !== hash) {
        history.replaceState(null, "", hash || location.pathname + location.search);
      }
      table.dispatchEvent(new CustomEvent("filtered", { detail: { selects: selects } }));
    }

    selects.forEach(function (select) { select.addEventListener("change", apply); });
    form.addEventListener("reset", function (event) {
      event.preventDefault();
      selects.forEach(function (select) { select.value = ""; });
      apply();
    });
    form.addEventListener("submit", function (event) { event.preventDefault(); apply(); });
    form.hidden = false;
    document.querySelectorAll("[data-needs-script]").forEach(function (el) { el.hidden = false; });
    apply();
  }

  /* ---------- audit worksheet: copy a finding id; downloads of exactly the rows a filter leaves ---------- */
  function setupCopy(button) {
    button.hidden = false;
    button.addEventListener("click", function () {
      var text = button.getAttribute("data-copy");
      function done(ok) {
        button.textContent = ok ? "Copied" : "Select and copy";
        setTimeout(function () { button.textContent = "Copy id"; }, 1500);
      }
      function fallback() {
        var code = button.parentNode.querySelector(".fid-text");
        var range = document.createRange();
        range.selectNodeContents(code);
        var selection = window.getSelection();
        selection.removeAllRanges();
        selection.addRange(range);
        var ok = false;
        try { ok = document.execCommand("copy"); } catch (error) { ok = false; }
        done(ok);
      }
      if (navigator.clipboard && window.isSecureContext) {
        navigator.clipboard.writeText(text).then(function () { done(true); }, fallback);
      } else {
        fallback();
      }
    });
  }

  function setupDownloads(table, data) {
    var links = { csv: document.querySelector("[data-download='csv']"), json: document.querySelector("[data-download='json']") };
    var note = document.querySelector("[data-download-note]");
    var urls = {};
    function link(kind, text, type, name) {
      if (urls[kind]) { URL.revokeObjectURL(urls[kind]); }
      urls[kind] = URL.createObjectURL(new Blob([text], { type: type }));
      links[kind].href = urls[kind];
      links[kind].setAttribute("download", name);
    }
    table.addEventListener("filtered", function (event) {
      var shown = {};
      Array.prototype.forEach.call(table.tBodies[0].rows, function (row) {
        if (!row.hidden) { shown[row.getAttribute("data-id")] = true; }
      });
      var ids = data.order.filter(function (id) { return shown[id]; });
      var filters = {};
      var aircraft = "", rule = "";
      event.detail.selects.forEach(function (select) {
        if (select.value) { filters[select.name] = [select.value]; }
        if (select.name === "aircraft") { aircraft = select.value; }
        if (select.name === "rule") { rule = select.value; }
      });
      var stale = data.stale.filter(function (entry) {
        return (!aircraft || entry.aircraft === aircraft) && (!rule || entry.discrepancy.split("/").pop() === rule);
      });
      var filtered = Object.keys(filters).length > 0;
      var suffix = filtered ? "-filtered" : "";
      link("csv", data.bom + data.header + ids.map(function (id) { return data.rows[id].csv; }).join(""),
           "text/csv;charset=utf-8", "findings" + suffix + ".csv");
      var documentOut = { as_of: data.as_of, filters: filters, columns: data.columns,
                          discrepancies: ids.map(function (id) { return data.rows[id].json; }),
                          stale_reviews: stale, build: data.build };
      link("json", JSON.stringify(documentOut, null, 2) + "\n", "application/json", "findings" + suffix + ".json");
      links.csv.textContent = "Download CSV (" + ids.length + (ids.length === 1 ? " finding)" : " findings)");
      links.json.textContent = "Download JSON (" + ids.length + (ids.length === 1 ? " finding)" : " findings)");
      if (note) {
        note.textContent = filtered ? "The downloads hold the " + ids.length + " findings shown (filtered), in the " +
          "columns and order of build.py check --format csv." : "The downloads hold every finding, in the columns " +
          "and order of build.py check --format csv (UTF-8 with a byte-order mark).";
      }
    });
  }

  /* ---------- search over window.AERIALBOOK_SEARCH (loaded from search-index.js) ---------- */
  function escapeHtml(text) {
    return text.replace(/[&<>"']/g, function (c) {
      return { "&": "&amp;", "<": "&lt;", ">": "&gt;", "\"": "&quot;", "'": "&#39;" }[c];
    });
  }

  function snippet(text, terms) {
    var lower = norm(text);
    var at = -1;
    terms.some(function (term) { at = lower.indexOf(term); return at !== -1; });
    var start = Math.max(0, at - 60);
    var piece = text.slice(start, start + 180);
    var html = escapeHtml(piece);
    terms.forEach(function (term) {
      if (!term) { return; }
      var safe = escapeHtml(term).replace(/[.*+?^${}()|[\]\\]/g, "\\$&");
      html = html.replace(new RegExp("(" + safe + ")", "ig"), "<mark>$1</mark>");
    });
    return (start > 0 ? "… " : "") + html + (start + 180 < text.length ? " …" : "");
  }

  function search(entries, query) {
    var terms = norm(query).split(/\s+/).filter(Boolean);
    if (!terms.length) { return { terms: terms, hits: [] }; }
    var hits = [];
    entries.forEach(function (entry) {
      var title = norm(entry.title), body = norm(entry.text), keys = norm(entry.keys || "");
      var score = 0;
      var all = terms.every(function (term) {
        var inKeys = (" " + keys + " ").indexOf(" " + term + " ") !== -1;
        var inTitle = title.indexOf(term) !== -1;
        var inBody = body.indexOf(term) !== -1;
        score += inKeys ? 10 : 0;
        score += inTitle ? 5 : 0;
        score += inBody ? 1 : 0;
        return inKeys || inTitle || inBody || keys.indexOf(term) !== -1;
      });
      if (all) { hits.push({ entry: entry, score: score }); }
    });
    hits.sort(function (a, b) {
      return b.score - a.score || (a.entry.title < b.entry.title ? -1 : a.entry.title > b.entry.title ? 1 : 0);
    });
    return { terms: terms, hits: hits };
  }

  function setupSearch(box) {
    var entries = window.AERIALBOOK_SEARCH || [];
    var root = box.getAttribute("data-root") || "";
    var input = box.querySelector("input[name='q']");
    var list = document.getElementById("search-results");
    var status = document.getElementById("search-status");
    var params = new URLSearchParams(location.search);
    if (params.get("q")) { input.value = params.get("q"); }

    function run() {
      var found = search(entries, input.value);
      list.innerHTML = "";
      found.hits.slice(0, 200).forEach(function (hit) {
        var item = document.createElement("li");
        item.innerHTML = "<span class='kind'>" + escapeHtml(hit.entry.kind) + "</span>" +
          "<a href='" + escapeHtml(root + hit.entry.url) + "'>" + escapeHtml(hit.entry.title) + "</a>" +
          "<p class='snippet'>" + snippet(hit.entry.text, found.terms) + "</p>";
        list.appendChild(item);
      });
      if (!found.terms.length) {
        status.textContent = "Type a registration, position, part number, cable, service or a word from the notes.";
      } else {
        status.textContent = found.hits.length + (found.hits.length === 1 ? " match" : " matches") +
          " for \u201c" + input.value.trim() + "\u201d";
      }
    }

    input.addEventListener("input", run);
    box.addEventListener("submit", function (event) {
      event.preventDefault();
      if (history.replaceState) {
        history.replaceState(null, "", "?q=" + encodeURIComponent(input.value));
      }
      run();
    });
    run();
  }

  document.addEventListener("DOMContentLoaded", function () {
    document.querySelectorAll("table[data-sortable]").forEach(makeSortable);
    document.querySelectorAll("button.copy[data-copy]").forEach(setupCopy);
    var exported = document.getElementById("audit-export");
    var worksheet = document.getElementById("audit-table");
    if (exported && worksheet) { setupDownloads(worksheet, JSON.parse(exported.textContent)); }
    document.querySelectorAll("form[data-filter-for]").forEach(setupFilters);
    var box = document.querySelector("form[data-search]");
    if (box) { setupSearch(box); }
  });
}());
