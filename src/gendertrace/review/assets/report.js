/* The review report's behaviour: select a finding, show its evidence, filter, move with the keys, sort, and
   keep the post-editor's decisions (local storage) and export them as a decisions file.
   It only toggles classes, attributes and form values on markup the report already holds; it never builds
   markup from data. */
(function () {
  "use strict";

  var marks = Array.prototype.slice.call(document.querySelectorAll(".fmark:not(.cont)"));
  var rows = Array.prototype.slice.call(document.querySelectorAll(".findings-list tr[data-finding-id]"));
  var details = Array.prototype.slice.call(document.querySelectorAll(".fdetail"));
  var empty = document.getElementById("detail-empty");
  var counter = document.getElementById("shown-count");
  var slider = document.getElementById("min-confidence");
  var sliderValue = document.getElementById("min-confidence-value");
  var boxes = Array.prototype.slice.call(document.querySelectorAll("input[name=kind]"));
  var selectedId = null;

  function byId(list, id) {
    return list.filter(function (el) { return el.getAttribute("data-finding-id") === id; });
  }
  function groupBy(selector, attr) {
    var groups = {};
    Array.prototype.forEach.call(document.querySelectorAll(selector), function (el) {
      var key = el.getAttribute(attr);
      (groups[key] = groups[key] || []).push(el);
    });
    return groups;
  }
  var parts = groupBy(".fmark", "data-finding-id");
  var evidence = groupBy(".ev", "data-evidence-id");
  function allParts(id) { return parts[id] || []; }
  function isShown(el) { return !el.classList.contains("is-filtered"); }
  function shownMarks() { return marks.filter(isShown); }

  function clearSelection() {
    Array.prototype.forEach.call(document.querySelectorAll(".is-selected"), function (el) {
      el.classList.remove("is-selected");
      if (el.classList.contains("fmark")) { el.setAttribute("aria-pressed", "false"); }
    });
    Array.prototype.forEach.call(document.querySelectorAll(".is-evidence"), function (el) {
      el.classList.remove("is-evidence");
    });
    details.forEach(function (d) { d.hidden = true; });
    Array.prototype.forEach.call(document.querySelectorAll(".pdetail"), function (p) { p.hidden = true; });
    if (empty) { empty.hidden = false; }
    selectedId = null;
  }

  function select(id, focus) {
    var mark = byId(marks, id)[0];
    var detail = document.getElementById("detail-" + id);
    clearSelection();
    if (!detail) { return; }
    selectedId = id;
    allParts(id).forEach(function (el) { el.classList.add("is-selected"); });
    byId(rows, id).forEach(function (el) { el.classList.add("is-selected"); });
    if (mark) {
      mark.setAttribute("aria-pressed", "true");
      (mark.getAttribute("data-evidence") || "").split(" ").forEach(function (eid) {
        (evidence[eid] || []).forEach(function (ev) { ev.classList.add("is-evidence"); });
      });
      if (focus) { mark.focus({ preventScroll: true }); }
      var box = mark.getBoundingClientRect();
      if (box.top < 80 || box.bottom > window.innerHeight - 20) {
        mark.scrollIntoView({ block: "center" });
      }
    }
    detail.hidden = false;
    var person = document.getElementById(detail.getAttribute("data-person") || "");
    if (person) { person.hidden = false; }
    if (empty) { empty.hidden = true; }
    if (window.history && window.history.replaceState) {
      try { window.history.replaceState(null, "", "#" + id); } catch (e) { /* some file viewers refuse */ }
    }
  }

  function step(delta) {
    var shown = shownMarks();
    if (!shown.length) { return; }
    var ids = shown.map(function (m) { return m.getAttribute("data-finding-id"); });
    var i = selectedId === null ? -1 : ids.indexOf(selectedId);
    var next;
    if (i === -1) {
      next = delta > 0 ? 0 : ids.length - 1;
    } else {
      next = Math.min(Math.max(i + delta, 0), ids.length - 1);
    }
    select(ids[next], true);
  }

  function applyFilters() {
    var kinds = {};
    boxes.forEach(function (b) { kinds[b.value] = b.checked; });
    var min = slider ? parseFloat(slider.value) : 0;
    var count = 0;
    function passes(el) {
      var kind = el.getAttribute("data-kind");
      var known = Object.prototype.hasOwnProperty.call(kinds, kind);
      return (!known || kinds[kind]) && parseFloat(el.getAttribute("data-confidence")) >= min - 1e-9;
    }
    marks.forEach(function (m) {
      var ok = passes(m);
      allParts(m.getAttribute("data-finding-id")).forEach(function (el) {
        el.classList.toggle("is-filtered", !ok);
      });
      m.tabIndex = ok ? 0 : -1;
      if (ok) { count += 1; }
    });
    rows.forEach(function (r) { r.hidden = !passes(r); });
    if (counter) {
      counter.textContent = "Showing " + count + " of " + counter.getAttribute("data-total") + " findings";
    }
    if (sliderValue) { sliderValue.textContent = min.toFixed(2); }
    if (selectedId !== null) {
      var current = byId(marks, selectedId)[0];
      if (current && !isShown(current)) { clearSelection(); }
    }
  }

  function sortBy(th) {
    var table = th.closest("table");
    var body = table.tBodies[0];
    var col = Array.prototype.indexOf.call(th.parentNode.children, th);
    var numeric = th.getAttribute("data-type") === "number";
    var dir = th.getAttribute("aria-sort") === "ascending" ? "descending" : "ascending";
    Array.prototype.forEach.call(th.parentNode.children, function (h) { h.setAttribute("aria-sort", "none"); });
    th.setAttribute("aria-sort", dir);
    var list = Array.prototype.slice.call(body.rows);
    list.sort(function (a, b) {
      var x = a.cells[col].getAttribute("data-value") || "";
      var y = b.cells[col].getAttribute("data-value") || "";
      var c = numeric ? parseFloat(x) - parseFloat(y) : x.localeCompare(y, undefined, { numeric: true });
      return dir === "ascending" ? c : -c;
    });
    list.forEach(function (r) { body.appendChild(r); });
  }

  document.addEventListener("click", function (ev) {
    var t = ev.target;
    var sorter = t.closest("th[aria-sort] button");
    if (sorter) { sortBy(sorter.closest("th")); return; }
    var stepper = t.closest("[data-step]");
    if (stepper) { step(parseInt(stepper.getAttribute("data-step"), 10)); return; }
    var mark = t.closest(".fmark");
    if (mark) {
      if (isShown(mark)) { select(mark.getAttribute("data-finding-id"), true); }
      return;
    }
    var row = t.closest(".findings-list tr[data-finding-id]");
    if (row) { select(row.getAttribute("data-finding-id"), false); }
  });

  document.addEventListener("keydown", function (ev) {
    if (ev.ctrlKey || ev.metaKey || ev.altKey) { return; }
    var t = ev.target;
    var tag = t && t.tagName ? t.tagName.toLowerCase() : "";
    if ((ev.key === "Enter" || ev.key === " ") && t.classList && t.classList.contains("fmark")) {
      ev.preventDefault();
      select(t.getAttribute("data-finding-id"), true);
      return;
    }
    var typing = tag === "textarea" || tag === "select" || (t && t.isContentEditable) ||
      (tag === "input" && ["checkbox", "radio", "range", "button"].indexOf(t.type) === -1);
    if (typing) { return; }
    if (ev.key === "n" || ev.key === "N") { ev.preventDefault(); step(1); }
    else if (ev.key === "p" || ev.key === "P") { ev.preventDefault(); step(-1); }
    else if (ev.key === "Escape") { clearSelection(); }
  });

  /* Decisions: one record per finding id, kept under the report's key; the export names each finding's
     place and words too, so that it can be matched to the results again. */
  var storeKey = document.body.getAttribute("data-decisions-key") || "gendertrace-decisions";
  var decided = document.getElementById("decided-count");
  var memory = {};
  function loadDecisions() {
    try {
      var text = window.localStorage.getItem(storeKey);
      return text ? JSON.parse(text) : {};
    } catch (e) { return memory; }
  }
  function saveDecisions(all) {
    memory = all;
    try { window.localStorage.setItem(storeKey, JSON.stringify(all)); } catch (e) { /* kept in memory */ }
  }
  function countDecided(all) {
    if (decided) { decided.textContent = Object.keys(all).length + " decided"; }
  }
  function readForm(box) {
    var id = box.getAttribute("data-finding-id");
    var chosen = box.querySelector("input[type=radio]:checked");
    var comment = box.querySelector("textarea").value;
    var all = loadDecisions();
    if (!chosen && !comment.trim()) { delete all[id]; }
    else {
      all[id] = { decision: chosen ? chosen.value : "", comment: comment,
                  decided_at: new Date().toISOString() };
    }
    saveDecisions(all);
    countDecided(all);
  }
  function restoreForms() {
    var all = loadDecisions();
    Array.prototype.forEach.call(document.querySelectorAll(".decision"), function (box) {
      var rec = all[box.getAttribute("data-finding-id")];
      if (!rec) { return; }
      Array.prototype.forEach.call(box.querySelectorAll("input[type=radio]"), function (r) {
        r.checked = r.value === rec.decision;
      });
      box.querySelector("textarea").value = rec.comment || "";
    });
    countDecided(all);
  }
  function exportDecisions() {
    var all = loadDecisions();
    var out = [];
    details.forEach(function (d) {
      var id = d.getAttribute("data-finding-id");
      var rec = all[id];
      if (!rec) { return; }
      out.push({ finding: id, document: d.getAttribute("data-doc-id"), segment: d.getAttribute("data-seg-id"),
                 start: parseInt(d.getAttribute("data-start"), 10), end: parseInt(d.getAttribute("data-end"), 10),
                 text: d.getAttribute("data-text"), kind: d.getAttribute("data-kind"), decision: rec.decision,
                 comment: rec.comment, decided_at: rec.decided_at });
    });
    var file = { format: "gendertrace-decisions", version: 1, results: document.body.getAttribute("data-results"),
                 exported_at: new Date().toISOString(), decisions: out };
    var blob = new Blob([JSON.stringify(file, null, 2) + "\n"], { type: "application/json" });
    var link = document.createElement("a");
    var base = (document.body.getAttribute("data-results") || "review").replace(/\.jsonl$/, "");
    link.href = URL.createObjectURL(blob);
    link.download = base + ".decisions.json";
    document.body.appendChild(link);
    link.click();
    setTimeout(function () { URL.revokeObjectURL(link.href); link.remove(); }, 1000);
  }
  document.addEventListener("change", function (ev) {
    var box = ev.target.closest && ev.target.closest(".decision");
    if (box) { readForm(box); }
  });
  document.addEventListener("input", function (ev) {
    var box = ev.target.closest && ev.target.closest(".decision");
    if (box && ev.target.tagName.toLowerCase() === "textarea") { readForm(box); }
  });
  document.addEventListener("click", function (ev) {
    var clear = ev.target.closest && ev.target.closest("[data-clear-decision]");
    if (clear) {
      var box = clear.closest(".decision");
      Array.prototype.forEach.call(box.querySelectorAll("input[type=radio]"), function (r) { r.checked = false; });
      box.querySelector("textarea").value = "";
      readForm(box);
    }
    if (ev.target.closest && ev.target.closest("#export-decisions")) { exportDecisions(); }
  });
  restoreForms();

  boxes.forEach(function (b) { b.addEventListener("change", applyFilters); });
  if (slider) { slider.addEventListener("input", applyFilters); slider.addEventListener("change", applyFilters); }

  applyFilters();
  var wanted = window.location.hash.replace(/^#/, "");
  if (wanted && byId(marks, wanted).length) { select(wanted, false); }
})();
