// The guide page's ranking form: the same ranking as `kitleaf pinpoint`, from the readings
// embedded in the page (kitleaf.faults.rank, docs/faults.md). Nothing is fetched.
(function () {
  "use strict";
  var form = document.getElementById("pinpoint");
  var source = document.getElementById("pinpoint-data");
  if (!form || !source) { return; }
  var data = JSON.parse(source.textContent);
  var out = document.getElementById("pinpoint-result");
  form.hidden = false;

  function meterError(volts) {
    var m = data.meter;
    return m.resolution + (m.accuracy + m.margin) * Math.abs(volts);
  }

  function normal(x, centre, sigma) {
    return -0.5 * Math.pow((x - centre) / sigma, 2) - Math.log(sigma);
  }

  function logAddExp(a, b) {
    var top = Math.max(a, b);
    return top + Math.log(Math.exp(a - top) + Math.exp(b - top));
  }

  function logLikelihood(f, b, measured) {
    var sharp = 0, broad = 0;
    measured.forEach(function (r) {
      var c = data.centre[f][r.point][b];
      var side = (r.volts >= c ? data.high[f][r.point][b] - c : c - data.low[f][r.point][b]) / 2;
      var sm = meterError(r.volts);
      sharp += normal(r.volts, c, sm);
      broad += normal(r.volts, c, Math.sqrt(side * side + sm * sm));
    });
    return logAddExp(Math.log(1 - data.broad) + sharp, Math.log(data.broad) + broad);
  }

  function fitsGood(b, measured) {
    return measured.every(function (r) {
      var lo = data.low[0][r.point][b], hi = data.high[0][r.point][b];
      var pad = data.widen * (hi - lo) + meterError(r.volts);
      return r.volts >= lo - pad && r.volts <= hi + pad;
    });
  }

  function readings() {
    var found = [], problems = [];
    var limit = data.supply * 1.1 + meterError(data.supply * 1.1);
    data.points.forEach(function (p, i) {
      var text = form.elements[p.name].value.trim().replace(",", ".");
      if (text === "") { return; }
      var volts = Number(text);
      if (!isFinite(volts)) {
        problems.push(p.name + ": '" + text + "' is not a number of volts");
      } else if (Math.abs(volts) > limit) {
        problems.push(p.name + ": " + volts + " V is beyond what the " + data.supply +
                      " V supply can give; check the meter's range");
      } else {
        found.push({point: i, volts: volts});
      }
    });
    if (!found.length && !problems.length) { problems.push("type at least one reading"); }
    return {found: found, problems: problems};
  }

  function show(head, lines, tag) {
    out.textContent = "";
    var first = document.createElement("p");
    first.textContent = head;
    out.appendChild(first);
    var list = document.createElement(tag);
    lines.forEach(function (line) {
      var item = document.createElement("li");
      item.textContent = line;
      list.appendChild(item);
    });
    out.appendChild(list);
  }

  form.addEventListener("submit", function (event) {
    event.preventDefault();
    var got = readings();
    if (got.problems.length) { show("Check these readings:", got.problems, "ul"); return; }
    var b = data.black.indexOf(form.elements.black.value);
    var ll = data.faults.map(function (_, f) { return logLikelihood(f, b, got.found); });
    var top = Math.max.apply(null, ll);
    var weights = ll.map(function (x) { return Math.exp(x - top); });
    var total = weights.reduce(function (a, x) { return a + x; }, 0);
    var good = fitsGood(b, got.found);
    var order = ll.map(function (_, f) { return f; })
      .filter(function (f) { return !(good && f === 0); })
      .sort(function (x, y) { return ll[y] - ll[x] || x - y; }).slice(0, 5);
    var lines = order.map(function (f) {
      var share = weights[f] / total;
      var shown = share >= 0.005 ? Math.round(share * 100) + " %" : "under 1 %";
      return shown + ": " + (f === 0 ? "a good build" : data.faults[f].text);
    });
    show(good ? "These readings fit a good build. Faults that read much like it:"
              : "These readings do not fit a good build. Most likely:", lines, "ol");
  });
}());
