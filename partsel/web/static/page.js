// partsel local page: the bank view's editing (POST /api/bank/plot, redraw). No other script.
(function () {
  "use strict";
  var form = document.getElementById("bank-form");
  if (!form) { return; }
  var tbody = document.querySelector("#bank-lines tbody");
  var timer = null;
  var FIELDS = ["rail", "target", "ripple", "step", "band", "mount_l", "margin", "model",
                "corners", "temp", "age", "yield", "seed", "distribution"];

  function fieldValue(el) {
    if (!el) { return ""; }
    if (el.type === "checkbox") { return el.checked ? "1" : ""; }
    return el.value.trim();
  }

  function lines() {
    var out = [];
    tbody.querySelectorAll("tr.line").forEach(function (tr) {
      var pn = tr.querySelector(".pn").value.trim();
      if (!pn) { return; }
      out.push({part_number: pn, count: tr.querySelector(".count").value.trim(),
                maker: tr.querySelector(".maker").value.trim() || null});
    });
    return out;
  }

  function body() {
    var b = {};
    FIELDS.forEach(function (k) {
      var v = fieldValue(form.elements[k]);
      if (v) { b[k] = v; }
    });
    b.lines = lines();
    return b;
  }

  function clearErrors() {
    document.querySelectorAll(".error").forEach(function (el) { el.textContent = ""; });
  }

  function showError(err) {
    var f = err.field || "";
    var m = /^lines\.(\d+)/.exec(f);
    var target = null;
    if (m) {
      var rows = Array.prototype.filter.call(tbody.querySelectorAll("tr.line"), function (tr) {
        return tr.querySelector(".pn").value.trim();
      });
      var tr = rows[Number(m[1])];
      target = tr ? tr.querySelector(".line-error") : null;
    } else if (f) {
      target = form.querySelector('.error[data-field="' + f + '"]');
    }
    (target || document.getElementById("bank-error")).textContent = err.error;
  }

  function url(b) {
    var p = new URLSearchParams();
    FIELDS.forEach(function (k) { if (b[k]) { p.append(k, b[k]); } });
    b.lines.forEach(function (l) {
      p.append("line", l.part_number + ":" + l.count + (l.maker ? ":" + l.maker : ""));
    });
    return "/bank?" + p.toString();
  }

  function recompute() {
    var b = body();
    clearErrors();
    document.getElementById("bank-total").textContent = "computing...";
    fetch("/api/bank/plot", {method: "POST", headers: {"Content-Type": "application/json"},
                             body: JSON.stringify(b)})
      .then(function (r) { return r.json().then(function (j) { return [r.status, j]; }); })
      .then(function (sj) {
        var status = sj[0], j = sj[1];
        if (status !== 200) {
          document.getElementById("bank-total").textContent = "";
          showError(j);
          return;
        }
        window.BANK_RESULT = j.result;
        document.getElementById("bank-total").textContent = j.summary;
        document.getElementById("bank-table-box").innerHTML = j.table;
        Plotly.react("zplot", j.figure.data, j.figure.layout,
                     {displaylogo: false, responsive: true, showLink: false,
                      showSendToCloud: false, showEditInChartStudio: false});
        history.replaceState(null, "", url(b));
      })
      .catch(function () {
        document.getElementById("bank-error").textContent =
          "the server did not answer: is partsel serve still running?";
      });
  }

  function soon() {
    if (timer) { clearTimeout(timer); }
    timer = setTimeout(recompute, 150);
  }

  function newRow() {
    var tr = document.createElement("tr");
    tr.className = "line";
    tr.innerHTML = '<td><input class="pn"></td><td><input class="count" type="number" ' +
      'min="1" step="1" value="1"></td><td><input class="maker"></td><td><button ' +
      'type="button" class="remove">remove</button></td><td class="error line-error"></td>';
    tbody.appendChild(tr);
    return tr;
  }

  tbody.addEventListener("input", function (e) {
    if (e.target.classList.contains("count")) { soon(); }
  });
  tbody.addEventListener("change", function (e) {
    if (!e.target.classList.contains("count")) { soon(); }
  });
  tbody.addEventListener("click", function (e) {
    if (e.target.classList.contains("remove")) {
      e.target.closest("tr").remove();
      if (!tbody.querySelector("tr.line")) { newRow(); }
      soon();
    }
  });
  form.addEventListener("change", soon);
  document.getElementById("add-line").addEventListener("click", function () {
    newRow().querySelector(".pn").focus();
  });
  document.getElementById("recompute").addEventListener("click", recompute);

  function download(a, text, type) {
    var blob = new Blob([text], {type: type});
    a.href = URL.createObjectURL(blob);
  }
  document.getElementById("download-bank").addEventListener("click", function () {
    var csv = "part_number,count,maker\n" + lines().map(function (l) {
      return [l.part_number, l.count, l.maker || ""].map(function (c) {
        c = String(c);
        return /[",\n]/.test(c) ? '"' + c.replace(/"/g, '""') + '"' : c;
      }).join(",");
    }).join("\n") + "\n";
    download(this, csv, "text/csv");
  });
  document.getElementById("download-json").addEventListener("click", function () {
    download(this, JSON.stringify(window.BANK_RESULT || {}, null, 2), "application/json");
  });
})();
