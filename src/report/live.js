// The report's own script: pick another target and the frontier figure,
// the table of the cheapest policy per chance level and the policies'
// chances follow, computed here from the figures embedded in the page
// (no network). Without scripts the page shows the report's own target.
// The script sits before the figures and tables, so it starts once the
// whole page has been read.
document.addEventListener("DOMContentLoaded", function () {
  "use strict";
  var dataNode = document.getElementById("wo-data");
  var panel = document.getElementById("wo-live");
  if (!dataNode || !panel) return;
  var D = JSON.parse(dataNode.textContent);
  var GRID = D.grid; // steps of the target grid in 1
  var Z = 1.959963984540054;
  var NB = "\u00a0";

  // A trial's figure is kept as the highest grid step it reaches, so the
  // chance at step k is the share of trials at step k or above.
  function hits(p, k) {
    var s = 0;
    for (var j = 0; j < p.h.length; j += 2) if (p.h[j] >= k) s += p.h[j + 1];
    return s;
  }
  // Wilson score interval, as the command line computes it.
  function wilson(s, n) {
    var p = s / n, d = 1 + Z * Z / n;
    var c = (p + Z * Z / (2 * n)) / d;
    var h = Z * Math.sqrt(p * (1 - p) / n + Z * Z / (4 * n * n)) / d;
    return { value: p, lo: s === 0 ? 0 : Math.max(c - h, 0), hi: s >= n ? 1 : Math.min(c + h, 1) };
  }
  // As the command line writes a chance: rounded to a tenth of a point
  // (halves away from zero), then to a whole point with halves to even
  // (Rust's formatting), except near 0 and 100.
  function chancePct(x) {
    var p = Math.round(1000 * x) / 10;
    if ((p > 0 && p < 1) || (p > 99 && p < 100)) return p.toFixed(1) + NB + "%";
    var r = Math.floor(p);
    if (p - r > 0.5 || (p - r === 0.5 && r % 2 === 1)) r += 1;
    return r + NB + "%";
  }
  function withInterval(c) {
    return chancePct(c.value) + " [" + chancePct(c.lo) + " to " + chancePct(c.hi) + "]";
  }
  function pctTrim(x, d) {
    var s = (100 * x).toFixed(d);
    if (s.indexOf(".") >= 0) s = s.replace(/0+$/, "").replace(/\.$/, "");
    return s + NB + "%";
  }
  function money(x) {
    var s = Math.round(Math.abs(x)).toString().replace(/\B(?=(\d{3})+(?!\d))/g, ",");
    return (x < 0 ? "-" : "") + s;
  }
  function moneyShort(x) {
    var a = Math.abs(x), sign = x < 0 ? "-" : "";
    if (a >= 1e9) return sign + (a / 1e9).toFixed(2) + NB + "G";
    if (a >= 1e6) return sign + (a / 1e6).toFixed(2) + NB + "M";
    if (a >= 1e5) return sign + (a / 1e3).toFixed(0) + NB + "k";
    if (a >= 1e3) return sign + (a / 1e3).toFixed(1) + NB + "k";
    return sign + a.toFixed(0);
  }
  // The first table under the heading `id` whose second column's head
  // starts with `second`.
  function tableAfter(id, second) {
    var h = document.getElementById(id);
    for (var el = h && h.nextElementSibling; el; el = el.nextElementSibling) {
      if (el.tagName === "H2") return null;
      var ts = el.tagName === "TABLE" ? [el] : Array.prototype.slice.call(el.querySelectorAll ? el.querySelectorAll("table") : []);
      for (var i = 0; i < ts.length; i++) {
        var head = ts[i].tHead && ts[i].tHead.rows[0].cells[1];
        if (head && head.textContent.trim().indexOf(second) === 0) return ts[i];
      }
    }
    return null;
  }

  var range = document.getElementById("wo-target-range");
  var input = document.getElementById("wo-target");
  var says = document.getElementById("wo-says");
  var first = Math.round(D.target * GRID);
  var levelsTable = tableAfter("levels", "policy");
  var policiesTable = tableAfter("policies", "chance");
  var figure = document.getElementById("wo-frontier");
  var shown = []; // the chances last shown, for the checks

  function update(k) {
    var t = k / GRID;
    var n = D.n;
    var ch = D.policies.map(function (p) { return wilson(hits(p, k), n); });
    // Non-dominated at this target: no cheaper (or as cheap, listed
    // before) policy has at least its chance.
    var best = -1, nd = ch.map(function (c) {
      var keep = c.value > best;
      if (keep) best = c.value;
      return keep;
    });
    shown = D.policies.map(function (p, i) {
      return { name: p.name, chance: ch[i].value, lo: ch[i].lo, hi: ch[i].hi, nondominated: nd[i] };
    });
    document.body.setAttribute("data-wo-target", String(t));

    // The frontier figure.
    if (figure) {
      var py0 = +figure.getAttribute("data-py0"), py1 = +figure.getAttribute("data-py1");
      var py = function (c) { return Math.round(py0 + (py1 - py0) * c); };
      var line = [];
      figure.querySelectorAll(".wo-pt").forEach(function (g) {
        var i = +g.getAttribute("data-i");
        var c = ch[i].value;
        g.setAttribute("transform", "translate(0," + (py(c) - py(+g.getAttribute("data-chance"))) + ")");
        g.setAttribute("opacity", nd[i] ? "1" : "0.3");
        g.setAttribute("data-shown", String(c));
        var tip = g.querySelector(".wo-offchance");
        if (tip) tip.textContent = chancePct(c);
        var dot = g.querySelector(".wo-dot");
        if (dot && nd[i]) line.push(dot.getAttribute("cx") + "," + py(c));
      });
      var l = document.getElementById("wo-line");
      if (l) l.setAttribute("points", line.join(" "));
      figure.querySelectorAll(".wo-bar").forEach(function (b) {
        var c = ch[+b.getAttribute("data-i")], kind = b.getAttribute("data-k");
        var x = b.getAttribute("data-x"), x0 = b.getAttribute("data-x0"), x1 = b.getAttribute("data-x1");
        b.setAttribute("points", kind === "0" ? x + "," + py(c.lo) + " " + x + "," + py(c.hi)
          : x0 + "," + py(kind === "1" ? c.lo : c.hi) + " " + x1 + "," + py(kind === "1" ? c.lo : c.hi));
        b.setAttribute("opacity", nd[+b.getAttribute("data-i")] ? "1" : "0.3");
      });
      var searched = document.getElementById("wo-searched");
      if (searched) searched.style.display = k === first ? "" : "none";
      var title = document.getElementById("wo-title");
      if (title) title.textContent = "Cost against the chance of at least " + pctTrim(t, 2) + " availability";
      var yd = document.getElementById("wo-ydesc");
      if (yd) yd.textContent = "Chance of meeting " + pctTrim(t, 2) + " (share of trials)";
    }

    // The cheapest policy for each chance level (consecutive levels with
    // the same answer share a row, as in the static table).
    if (levelsTable) {
      var body = levelsTable.tBodies[0];
      while (body.rows.length) body.deleteRow(0);
      var groups = [];
      D.levels.forEach(function (level) {
        var pick = -1;
        for (var i = 0; i < ch.length; i++) if (ch[i].value >= level - 1e-12) { pick = i; break; }
        var last = groups[groups.length - 1];
        if (last && last.pick === pick) last.levels.push(level);
        else groups.push({ levels: [level], pick: pick });
      });
      var prev = -1;
      groups.forEach(function (g) {
        var label = g.levels.map(function (l) { return String(Math.round(1000 * l) / 10); }).join(", ") + NB + "%";
        var cells;
        if (g.pick >= 0) {
          var p = D.policies[g.pick];
          cells = [label, p.name, withInterval(ch[g.pick]), money(p.cost),
            prev >= 0 ? "+" + moneyShort(p.cost - D.policies[prev].cost) : "-", p.sets];
          prev = g.pick;
        } else {
          cells = [label, "none found", "-", "-", "-", "no policy found reaches this chance"];
        }
        var row = body.insertRow();
        cells.forEach(function (c, j) {
          var td = row.insertCell();
          td.textContent = c;
          var head = levelsTable.tHead && levelsTable.tHead.rows[0].cells[j];
          if (head && head.className) td.className = head.className;
        });
        row.setAttribute("data-pick", g.pick >= 0 ? D.policies[g.pick].name : "");
      });
    }

    // Every policy's chance in the policies table.
    if (policiesTable) {
      Array.prototype.forEach.call(policiesTable.tBodies[0].rows, function (row) {
        // The first cell names the policy and its code: `F3 (1EAEAR)`.
        var name = row.cells[0].textContent.trim().replace(/ \([0-9A-Z]+\)$/, "");
        for (var i = 0; i < D.policies.length; i++) {
          if (D.policies[i].name === name) {
            row.cells[1].textContent = withInterval(ch[i]) + (nd[i] ? "" : " (dominated here)");
            row.setAttribute("data-chance", String(ch[i].value));
          }
        }
      });
    }

    // In words.
    var cheapest = [];
    [0.5, 0.9].forEach(function (level) {
      for (var i = 0; i < ch.length; i++) if (ch[i].value >= level - 1e-12) {
        cheapest.push("the cheapest with at least " + pctTrim(level, 0) + " chance is " +
          D.policies[i].name + " (" + money(D.policies[i].cost) + D.cur + ", " + chancePct(ch[i].value) + ")");
        return;
      }
      cheapest.push("no policy shown reaches " + pctTrim(level, 0) + " chance");
    });
    var count = nd.filter(Boolean).length;
    says.textContent = "At a target of " + pctTrim(t, 2) + (D.measure === "readiness" ? " readiness" : " availability") +
      ": " + cheapest.join("; ") + ". " + count + " of the " + D.policies.length +
      " policies shown stay non-dominated" + (k === first ? "." :
      "; the others are faded, and the grey dots of the search (costed at the report's own target) are hidden.") +
      " Chances are re-counted on the same " + money(n) + " trials; costs do not depend on the target.";
  }

  function set(k, from) {
    k = Math.max(1, Math.min(GRID, Math.round(k)));
    if (from !== range) range.value = String(k / GRID * 100);
    if (from !== input) input.value = (k / GRID * 100).toFixed(2);
    update(k);
  }
  range.addEventListener("input", function () { set(parseFloat(range.value) / 100 * GRID, range); });
  input.addEventListener("input", function () {
    var x = parseFloat(input.value);
    if (isFinite(x) && x > 0 && x <= 100) set(x / 100 * GRID, input);
  });
  document.getElementById("wo-reset").addEventListener("click", function () { set(first); });
  // A link may carry a target, e.g. index.html#target=96.5 (percent); it is
  // entered into the box as a reader would type it.
  function fromHash() {
    var m = /target=([0-9.]+)/.exec(location.hash);
    if (m) {
      input.value = m[1];
      input.dispatchEvent(new Event("input"));
    }
  }
  window.addEventListener("hashchange", fromHash);
  window.woShown = function () { return shown; };
  panel.hidden = false;
  set(first);
  fromHash();
});
