/* steadyline page script: draws the charts, filters the index, reloads live pages.
   Served from the site itself (Content-Security-Policy: script-src 'self'); no inline code,
   no eval: vega-embed runs with its expression interpreter (ast: true). */
(function () {
  "use strict";

  /* Vega-Lite gives each part of a stacked (vconcat) chart the container's full width for its
     plot and adds axes on top, so stacked charts would overflow their card: give them a width
     that leaves room for the axes instead. */
  /* Control charts carry a parameter "narrow": below this box width their limit labels move
     from beside the plot into it, and the plot gets the width the labels had. */
  var INSIDE_LABELS_PX = 600;

  function narrowLabels(spec, target) {
    var narrow = target.clientWidth < INSIDE_LABELS_PX;
    (spec && spec.params || []).forEach(function (p) {
      if (p && p.name === "narrow") { p.value = narrow; }
    });
    return spec;
  }

  function labelsInside(spec) {
    return (spec.params || []).some(function (p) { return p && p.name === "narrow" && p.value; });
  }

  function fitStacked(spec, target, shrink) {
    if (!spec || !Array.isArray(spec.vconcat)) { return spec; }
    var room = labelsInside(spec) ? 70 : 150;  // axis labels and title; limit labels beside
    var width = Math.max(120, Math.floor(target.clientWidth) - room - (shrink || 0));
    spec.vconcat.forEach(function (part) {
      if (part && part.width === "container") { part.width = width; }
    });
    return spec;
  }

  /* A chart's title does not wrap by itself, and Vega-Lite narrows the plot until a long title
     line fits beside it: on a narrow screen the plot would all but vanish. Break the title and
     subtitle lines at spaces to fit the chart's box (average character widths of the fonts). */
  function wrapLine(line, max) {
    if (typeof line !== "string" || line.length <= max) { return [line]; }
    var out = [], cur = "";
    line.split(" ").forEach(function (word) {
      if (cur && (cur + " " + word).length > max) { out.push(cur); cur = word; }
      else { cur = cur ? cur + " " + word : word; }
    });
    if (cur) { out.push(cur); }
    return out;
  }

  function fitTitle(spec, target) {
    var t = spec && spec.title;
    var width = Math.floor(target.clientWidth);
    if (!t || typeof t !== "object" || !width) { return spec; }
    var room = width - 30;                                 // the drawing's padding
    var sub = Math.max(24, Math.floor(room / 6.8));        // subtitle: 11px
    var main = Math.max(16, Math.floor(room / 9));         // title: 14px, semi-bold
    if (typeof t.text === "string" && t.text.length > main) { t.text = wrapLine(t.text, main); }
    if (Array.isArray(t.subtitle)) {
      t.subtitle = t.subtitle.reduce(function (all, line) {
        return all.concat(wrapLine(line, sub));
      }, []);
    }
    return spec;
  }

  /* Axis titles are centred on the plot and cut at the drawing's edge when longer than the
     plot: break them into lines that fit the plot's width (what is left of the box after the
     axis labels). Legends get as many columns as their entries fit beside each other, so that
     a narrow box stacks them instead of cutting the last ones off. */
  var AXIS_ROOM_PX = 70, AXIS_CHAR_PX = 6.5, LEGEND_ENTRY_PX = 200;
  /* Below this box width (a phone) the drawing's own padding shrinks to what the last
     label of a time axis needs. */
  var NARROW_PX = 480;

  function fitAxesAndLegends(spec, target) {
    var width = Math.floor(target.clientWidth);
    if (!spec || !width) { return spec; }
    var max = Math.max(12, Math.floor((width - AXIS_ROOM_PX) / AXIS_CHAR_PX));
    (function visit(node) {
      if (!node || typeof node !== "object") { return; }
      if (Array.isArray(node)) { node.forEach(visit); return; }
      Object.keys(node).forEach(function (key) {
        var v = node[key];
        if (key === "axis" && v && typeof v === "object" && v.title) {
          var text = Array.isArray(v.title) ? v.title.join(" ") : v.title;
          if (typeof text === "string" && text.length > max) { v.title = wrapLine(text, max); }
        } else if (key !== "datasets" && key !== "data") {
          visit(v);
        }
      });
    })(spec);
    spec.config = spec.config || {};
    if (width < NARROW_PX) {
      // slanted category labels reach a little left of where Vega reckons them
      var meta = spec.usermeta && spec.usermeta.steadyline;
      var slanted = meta && /pareto|column/.test(meta.display || "");
      spec.config.padding = { top: 8, bottom: 8, left: slanted ? 12 : 2, right: 14 };
    }
    spec.config.legend = spec.config.legend || {};
    spec.config.legend.columns = Math.max(1, Math.floor(width / LEGEND_ENTRY_PX));
    return spec;
  }

  /* Side-by-side charts (the Pareto chart of each period) go one above the other in a box too
     narrow for both, rather than running past the edge of the page. */
  var SIDE_BY_SIDE_MIN = 640;

  function stackWhenNarrow(spec, target) {
    if (spec && Array.isArray(spec.hconcat) && target.clientWidth < SIDE_BY_SIDE_MIN) {
      spec.vconcat = spec.hconcat;
      delete spec.hconcat;
    }
    return spec;
  }

  /* Vega reports some failures only to its logger (a dataflow it cannot build) and draws
     nothing, while vega-embed's promise still resolves: a blank box would pass for a chart.
     Each chart's view gets a logger of its own, and an error it logs makes the chart fail as
     any failure to draw does, in words on the page. vega-embed takes a View class but names
     none: it is taken from a first view of an empty chart, made once per page. */
  var LEVELS = { error: 1, warn: 2, info: 3, debug: 4 };  // Vega's log levels
  var viewClass = null;

  function baseView() {
    if (viewClass) { return viewClass; }
    viewClass = window.vegaEmbed(document.createElement("div"),
                                 { mark: "point", data: { values: [] } },
                                 { mode: "vega-lite", ast: true, renderer: "svg", actions: false })
      .then(function (probe) {
        var View = probe.view.constructor;
        probe.finalize();
        return View;
      }, function () { return null; });
    return viewClass;
  }

  function chartLogger(errors) {
    var level = LEVELS.warn;
    var logger = {
      level: function (l) {
        if (!arguments.length) { return level; }
        level = l;
        return logger;
      }
    };
    Object.keys(LEVELS).forEach(function (name) {
      logger[name] = function () {
        var args = Array.prototype.slice.call(arguments);
        if (name === "error") {
          errors.push(args.map(function (a) { return a && a.message ? a.message : String(a); }).join(" "));
        }
        if (level >= LEVELS[name]) {
          console[name === "debug" ? "log" : name].apply(console, [name.toUpperCase()].concat(args));
        }
        return logger;
      };
    });
    return logger;
  }

  function loggedView(View, errors) {
    if (!View) { return undefined; }
    return class extends View {
      constructor(spec, options) {
        super(spec, Object.assign({}, options, { logger: chartLogger(errors) }));
      }
    };
  }

  function notDrawn(target, err) {
    target.setAttribute("data-render", "error");
    var p = document.createElement("p");
    p.className = "render-error";
    p.textContent = "This chart could not be drawn: " + (err && err.message ? err.message : err);
    target.appendChild(p);
    throw err;
  }

  /* One chart: its spec is read afresh from the page each time (the fitting steps change it),
     fitted to the box's width now, and drawn. Returns vega-embed's promise. */
  var drawn = [];  // {target, block, width, result}

  function drawOne(entry) {
    var target = entry.target, block = entry.block;
    var spec;
    try { spec = JSON.parse(block.textContent); } catch (e) {
      target.setAttribute("data-render", "error");
      target.textContent = "This chart's description could not be read.";
      return Promise.reject(e);
    }
    entry.width = target.clientWidth;
    spec = fitStacked(stackWhenNarrow(fitAxesAndLegends(narrowLabels(fitTitle(spec, target),
                                                                     target), target), target),
                      target, entry.shrink);
    var errors = [];
    return Promise.resolve(baseView()).then(function (View) {
      return window.vegaEmbed(target, spec, {
        ast: true,                    // expression interpreter: works without 'unsafe-eval'
        renderer: "svg",
        actions: { export: true, source: false, compiled: false, editor: false },
        downloadFileName: block.id.replace(/-spec$/, ""),
        i18n: { SVG_ACTION: "Save as SVG", PNG_ACTION: "Save as PNG" },
        viewClass: loggedView(View, errors)
      });
    }).then(function (result) {
      if (errors.length) {
        result.finalize();
        target.textContent = "";
        return notDrawn(target, new Error(errors[0]));
      }
      entry.result = result;
      // A stacked chart's widths are estimated before drawing (its labels' room is not known
      // yet); when the drawing came out wider than its box, draw it once more, narrower by
      // the difference.
      var svg = target.querySelector("svg");
      var over = svg ? Math.ceil(svg.getBoundingClientRect().width - target.clientWidth) : 0;
      if (over > 0 && Array.isArray(spec.vconcat) && !entry.shrink) {
        entry.shrink = over + 2;
        result.finalize();
        target.textContent = "";
        return drawOne(entry);
      }
      target.setAttribute("data-render", "done");
      return result;
    }, function (err) { return notDrawn(target, err); });
  }

  function drawCharts() {
    var blocks = document.querySelectorAll("script.chart-spec");
    if (!blocks.length || typeof window.vegaEmbed !== "function") { return Promise.resolve([]); }
    blocks.forEach(function (block) {
      var target = document.getElementById(block.id.replace(/-spec$/, ""));
      if (target) { drawn.push({ target: target, block: block, width: 0, result: null, shrink: 0 }); }
    });
    window.steadylineCharts = Promise.allSettled(drawn.map(drawOne));
    return window.steadylineCharts;
  }

  /* When the window changes size (a phone turned, a window narrowed), every chart whose box
     changed width is drawn again for its new width: stacked charts, wrapped titles and
     side-by-side panels are fitted when drawn, so they would otherwise keep their first width.
     Waits for the resizing to settle; window.steadylineCharts is the latest drawing. */
  var RESIZE_SETTLE_MS = 200, RESIZE_MIN_PX = 8;

  function setupResize() {
    if (!drawn.length) { return; }
    var timer = null;
    window.addEventListener("resize", function () {
      window.clearTimeout(timer);
      timer = window.setTimeout(function () {
        var again = drawn.filter(function (e) {
          return Math.abs(e.target.clientWidth - e.width) >= RESIZE_MIN_PX;
        });
        if (!again.length) { return; }
        window.steadylineCharts = window.steadylineCharts.then(function () {
          return Promise.allSettled(again.map(function (e) {
            if (e.result) { e.result.finalize(); e.result = null; }
            e.target.textContent = "";
            e.shrink = 0;
            return drawOne(e);
          }));
        });
      }, RESIZE_SETTLE_MS);
    });
  }

  /* The index: search, filters (status, phase, owner, tag), sort order and the card or table
     view. Cards and table rows are the same projects (matched by data-slug): both are filtered
     and ordered together. The sort orders come with the page (data-order-<key>, worked out by
     the build), so the browser's order is exactly the build's. */
  function setupFilters() {
    var list = document.getElementById("project-list");
    if (!list) { return; }
    var text = document.getElementById("f-text");
    var status = document.getElementById("f-status");
    var phase = document.getElementById("f-phase");
    var owner = document.getElementById("f-owner");
    var tag = document.getElementById("f-tag");
    var sort = document.getElementById("f-sort");
    var count = document.getElementById("f-count");
    var empty = document.getElementById("f-empty");
    var rowsBody = document.getElementById("project-rows");
    var tableWrap = document.getElementById("project-table-wrap");
    var cards = Array.prototype.slice.call(list.querySelectorAll("li.card"));
    var rows = {};
    if (rowsBody) {
      Array.prototype.forEach.call(rowsBody.querySelectorAll("tr[data-slug]"), function (tr) {
        rows[tr.dataset.slug] = tr;
      });
    }
    function norm(s) { return (s || "").toLowerCase().normalize("NFKD").replace(/[\u0300-\u036f]/g, ""); }
    function apply() {
      var words = norm(text.value).split(/\s+/).filter(Boolean);
      var shown = 0;
      cards.forEach(function (card) {
        var ok = (!status || !status.value || card.dataset.status === status.value) &&
                 (!phase.value || card.dataset.phase === phase.value) &&
                 (!owner.value || card.dataset.owner === owner.value) &&
                 (!tag.value || card.dataset.tags.split("|").indexOf(tag.value) >= 0);
        if (ok && words.length) {
          var hay = norm(card.dataset.text);
          ok = words.every(function (w) { return hay.indexOf(w) >= 0; });
        }
        card.hidden = !ok;
        var row = rows[card.dataset.slug];
        if (row) { row.hidden = !ok; }
        if (ok) { shown += 1; }
      });
      count.textContent = shown + " shown";
      empty.hidden = shown !== 0;
    }
    function order() {
      if (!sort) { return; }
      var key = "order" + sort.value.charAt(0).toUpperCase() + sort.value.slice(1);
      cards.slice().sort(function (a, b) {
        return Number(a.dataset[key]) - Number(b.dataset[key]);
      }).forEach(function (card) {
        list.appendChild(card);
        var row = rows[card.dataset.slug];
        if (row) { rowsBody.appendChild(row); }
      });
    }
    function view() {
      var table = document.getElementById("f-view-table");
      var asTable = !!(table && table.checked && tableWrap);
      list.hidden = asTable;
      if (tableWrap) { tableWrap.hidden = !asTable; }
    }
    [text, status, phase, owner, tag].forEach(function (el) {
      if (!el) { return; }
      el.addEventListener("input", apply);
      el.addEventListener("change", apply);
    });
    if (sort) { sort.addEventListener("change", order); }
    Array.prototype.forEach.call(document.querySelectorAll('input[name="f-view"]'), function (el) {
      el.addEventListener("change", view);
    });
    document.getElementById("filters").addEventListener("submit", function (e) { e.preventDefault(); });
    order();
    apply();
    view();
  }

  /* Live reload, only on pages built by `steadyline watch` (they carry <meta name="steadyline-live">):
     poll the small state file the watcher rewrites and reload when this page's stamp changes. */
  function setupLive() {
    var meta = document.querySelector('meta[name="steadyline-live"]');
    if (!meta) { return; }
    var parts = meta.getAttribute("content").split(" ");
    var stateUrl = parts[0], key = parts[1], seen = null;
    function poll() {
      fetch(stateUrl + "?t=" + Date.now(), { cache: "no-store" }).then(function (r) {
        return r.ok ? r.json() : null;
      }).then(function (state) {
        if (!state) { return; }
        var stamp = state[key];
        if (seen === null) { seen = stamp; } else if (stamp !== seen) { window.location.reload(); }
      }).catch(function () { /* server restarting: try again */ });
    }
    poll();
    window.setInterval(poll, 700);
  }

  /* A card's "and K more in the data table" link opens the table it points to; on paper the
     folded blocks print open (a closed <details> prints only its summary line). */
  function setupDetails() {
    function openTarget(id) {
      var el = id && document.getElementById(id);
      if (!el) { return; }
      // a link to a folded block, or to the heading of a section whose block is folded
      var d = el.tagName === "DETAILS" ? el : el.parentElement.querySelector(":scope > details");
      if (d) { d.open = true; }
    }
    document.addEventListener("click", function (e) {
      var a = e.target.closest ? e.target.closest('a[href^="#"]') : null;
      if (a) { openTarget(a.getAttribute("href").slice(1)); }
    });
    openTarget(window.location.hash.slice(1));
    window.addEventListener("beforeprint", function () {
      document.querySelectorAll("details.method, details.facts-more, details.fit-figures, details.provenance-files").forEach(function (d) { d.open = true; });
    });
  }

  function start() { drawCharts(); setupResize(); setupFilters(); setupLive(); setupDetails(); }
  if (document.readyState === "loading") { document.addEventListener("DOMContentLoaded", start); } else { start(); }
})();
