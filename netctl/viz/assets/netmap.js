/* netctl interactive network map: a small canvas (2D) renderer, no dependencies.
 *
 * Reads the map data from the JSON data element (type application/json) named by the
 * container's data-netctl-map attribute. Every name from the input file reaches the page
 * through textContent only (never innerHTML). Coordinates arrive as integers on a grid
 * (data.q steps over the bounding box). Links are flat [source, target, ...] arrays.
 *
 * Drawing: the "base" (plain links, control paths, cycles, critical links, plain
 * states) is drawn into an off-screen canvas; the "marks" (drivers, proposed inputs,
 * unreached states, dilations, disturbances, single points of failure, the selection) are drawn on top every frame
 * at a fixed size in screen pixels, with a white halo, last. While the view moves, the
 * cached base is shifted and scaled (cheap) and redrawn sharp once the view rests.
 *
 * A click selects the nearest state within 12 px, else the nearest drawn link within
 * 6 px: its details say which way it acts and, on a grid (data.elements), which branch
 * of the case it belongs to (ID and kind; every circuit when several are in parallel).
 */
(function () {
  "use strict";

  var INK = "#262626";
  var DASH_UP_TO = 4000;   // more links than this on screen in a dashed layer: solid
  var THIN_ABOVE = 12000;  // more links than this on screen in a layer: hairlines
  var MARKS_EVERY_FRAME_UP_TO = 1500;  // more flagged states on screen: cached with the base
  var HEADS_UP_TO = 3000;  // arrowheads only when at most this many links are on screen
  var STYLE = {
    links: { color: "#8A8A8A", width: 0.8 },
    paths: { color: "#2464A8", width: 2.2 },
    cycles: { color: "#D99A1E", width: 2.0, dash: [7, 4] },
    critical: { color: INK, width: 4.5 },
    states: { fill: "#CFCFCF", stroke: "#5C5C5C" },
    drivers: { fill: "#C44E0E", stroke: INK, size: 11 },
    fixes: { fill: "none", stroke: "#C44E0E", size: 12 },
    unreached: { fill: "#EBDDF0", stroke: "#7B3F8C", size: 7 },
    dilations: { fill: "none", stroke: "#13806A", size: 8 },
    disturbances: { fill: "none", stroke: "#6E1F45", size: 12 },
    fragile: { fill: "none", stroke: "#4A148C", size: 16 },
    roles: { fill: ["#333333", "#F2F2F2", "#FFFFFF"], stroke: INK }
  };
  var ROLE_WORDS = ["critical (a driver in every minimum set)",
    "intermittent (a driver in some minimum sets)",
    "redundant (a driver in no minimum set)"];

  function el(tag, cls, text) {
    var e = document.createElement(tag);
    if (cls) { e.className = cls; }
    if (text !== undefined && text !== null) { e.textContent = String(text); }
    return e;
  }

  /* ------------------------------------------------------------ point marks */
  function triangle(ctx, x, y, r) {
    ctx.moveTo(x, y - r);
    ctx.lineTo(x + 0.866 * r, y + 0.5 * r);
    ctx.lineTo(x - 0.866 * r, y + 0.5 * r);
    ctx.closePath();
  }
  function square(ctx, x, y, r) { ctx.rect(x - r, y - r, 2 * r, 2 * r); }
  function diamond(ctx, x, y, r) {
    ctx.moveTo(x, y - r); ctx.lineTo(x + r, y); ctx.lineTo(x, y + r); ctx.lineTo(x - r, y);
    ctx.closePath();
  }
  function circle(ctx, x, y, r) { ctx.moveTo(x + r, y); ctx.arc(x, y, r, 0, 6.2832); }
  function octagon(ctx, x, y, r) {  // single points of failure: a ring around the site
    for (var k = 0; k < 8; k++) {
      var a = (k + 0.5) * 0.7853982, px = x + r * Math.cos(a), py = y + r * Math.sin(a);
      if (k === 0) { ctx.moveTo(px, py); } else { ctx.lineTo(px, py); }
    }
    ctx.closePath();
  }

  /* draw one kind of point mark for screen points xs/ys (arrays) */
  function drawPoints(ctx, key, xs, ys, rmax) {
    var st = STYLE[key], r = rmax ? Math.min(st.size, rmax) : st.size, i, n = xs.length;
    if (!n) { return; }
    var shape = key === "drivers" || key === "fixes" ? triangle
      : key === "unreached" ? square : key === "dilations" ? diamond
      : key === "fragile" ? octagon : circle;
    // halo: wide white outline under the mark, so it stands out over any link
    ctx.setLineDash([]);
    ctx.lineJoin = "round";
    ctx.beginPath();
    for (i = 0; i < n; i++) { shape(ctx, xs[i], ys[i], r); }
    ctx.strokeStyle = "rgba(255,255,255,0.95)";
    ctx.lineWidth = 6;
    ctx.stroke();
    if (st.fill !== "none") { ctx.fillStyle = st.fill; ctx.fill(); }
    if (key === "fixes") { ctx.setLineDash([3, 2]); }
    if (key === "disturbances") { ctx.setLineDash([2, 2.5]); }
    ctx.strokeStyle = st.stroke;
    ctx.lineWidth = key === "drivers" ? 1.2 : key === "fragile" ? 3 : 2.2;
    ctx.stroke();
    ctx.setLineDash([]);
    if (key === "unreached") {   // a cross inside the square: readable without colour
      ctx.beginPath();
      for (i = 0; i < n; i++) {
        ctx.moveTo(xs[i] - r * 0.6, ys[i] - r * 0.6); ctx.lineTo(xs[i] + r * 0.6, ys[i] + r * 0.6);
        ctx.moveTo(xs[i] + r * 0.6, ys[i] - r * 0.6); ctx.lineTo(xs[i] - r * 0.6, ys[i] + r * 0.6);
      }
      ctx.lineWidth = 1.2;
      ctx.stroke();
    }
    if (key === "drivers") {     // a white dot in the triangle: seen in grey print too
      ctx.beginPath();
      for (i = 0; i < n; i++) { circle(ctx, xs[i], ys[i] + 1, 1.6); }
      ctx.fillStyle = "#FFFFFF";
      ctx.fill();
    }
  }

  function lineStyle(ctx, key, alpha) {
    var st = STYLE[key];
    ctx.strokeStyle = st.color;
    ctx.lineWidth = st.width;
    ctx.globalAlpha = alpha;
    ctx.setLineDash(st.dash || []);
    ctx.lineCap = "round";
  }

  /* --------------------------------------------------------------- the map */
  function NetMap(root, data) {
    this.root = root;
    this.d = data;
    this.n = data.n;
    this.errors = [];
    this.drawn = {};
    this.frameTimes = [];
    this.layers = {};
    this.selected = -1;
    this.selLink = null;
    this.build();
  }

  NetMap.prototype.build = function () {
    var d = this.d, n = this.n, i;
    // world coordinates (y up) from the integer grid
    var wx = new Float64Array(n), wy = new Float64Array(n);
    var box = d.box, q = d.q;
    var sx = (box[2] - box[0]) / q, sy = (box[3] - box[1]) / q;
    for (i = 0; i < n; i++) { wx[i] = box[0] + d.x[i] * sx; wy[i] = box[1] + d.y[i] * sy; }
    this.wx = wx; this.wy = wy;
    this.isDriver = new Uint8Array(n);
    for (i = 0; i < d.drivers.length; i++) { this.isDriver[d.drivers[i]] = 1; }
    this.flags = {};
    var self = this;
    ["unreached", "dilations", "fixes", "fragile"].forEach(function (k) {
      var f = new Uint8Array(n), a = d[k] || [];
      for (var j = 0; j < a.length; j++) { f[a[j]] = 1; }
      self.flags[k] = f;
    });
    // degrees
    this.indeg = new Int32Array(n); this.outdeg = new Int32Array(n);
    ["links", "paths", "cycles"].forEach(function (k) {
      var a = d[k] || [];
      for (var j = 0; j < a.length; j += 2) { self.outdeg[a[j]]++; self.indeg[a[j + 1]]++; }
    });
    this.loopAt = new Uint8Array(n);
    for (i = 0; i < d.loops.length; i++) { this.loopAt[d.loops[i]] = 1; }
    this.fragileWhy = {};
    (d.fragile_notes || []).forEach(function (p) {
      (self.fragileWhy[p[0]] = self.fragileWhy[p[0]] || []).push(p[1]);
    });
    // grid: which branches join each pair of buses (key a*nb+b, a<b)
    this.owners = new Map();
    if (d.elements) {
      var E = d.elements, nb = E.n_buses, ends = E.ends;
      var own = function (a, b, k) {
        if (a < 0 || b < 0 || a === b) { return; }
        var key = Math.min(a, b) * nb + Math.max(a, b);
        if (!self.owners.has(key)) { self.owners.set(key, []); }
        var l = self.owners.get(key);
        if (l[l.length - 1] !== k) { l.push(k); }
      };
      for (i = 0; i < ends.length; i += 3) {
        var k3 = i / 3;
        own(ends[i], ends[i + 1], k3); own(ends[i], ends[i + 2], k3); own(ends[i + 1], ends[i + 2], k3);
      }
    }
    this.inputsAt = {};
    for (i = 0; i < d.inputs.length; i++) { this.inputsAt[d.inputs[i][0]] = d.inputs[i][1]; }
    this.disturbedBy = {};
    if (d.disturbances) {
      var h = d.disturbances.hits;
      for (i = 0; i < h.length; i += 2) {
        (this.disturbedBy[h[i + 1]] = this.disturbedBy[h[i + 1]] || []).push(d.disturbances.names[h[i]]);
      }
      this.disturbed = Object.keys(this.disturbedBy).map(Number);
    } else {
      this.disturbed = [];
    }
    this.index();
    this.ui();
    this.fit();
  };

  /* uniform grid over the world box: nearest state to the pointer */
  NetMap.prototype.index = function () {
    var n = this.n, i;
    var x0 = Infinity, y0 = Infinity, x1 = -Infinity, y1 = -Infinity;
    for (i = 0; i < n; i++) {
      if (this.wx[i] < x0) { x0 = this.wx[i]; } if (this.wx[i] > x1) { x1 = this.wx[i]; }
      if (this.wy[i] < y0) { y0 = this.wy[i]; } if (this.wy[i] > y1) { y1 = this.wy[i]; }
    }
    if (!n) { x0 = y0 = 0; x1 = y1 = 1; }
    var span = Math.max(x1 - x0, y1 - y0, 1e-9);
    var g = Math.max(1, Math.min(1024, Math.ceil(Math.sqrt(n / 2))));
    var cell = span / g * 1.0000001;
    var cnt = new Int32Array(g * g + 1), key = new Int32Array(n);
    for (i = 0; i < n; i++) {
      var cx = Math.min(g - 1, Math.floor((this.wx[i] - x0) / cell));
      var cy = Math.min(g - 1, Math.floor((this.wy[i] - y0) / cell));
      key[i] = cy * g + cx; cnt[key[i] + 1]++;
    }
    for (i = 0; i < g * g; i++) { cnt[i + 1] += cnt[i]; }
    var fill = cnt.slice(0, g * g), items = new Int32Array(n);
    for (i = 0; i < n; i++) { items[fill[key[i]]++] = i; }
    this.grid = { x0: x0, y0: y0, x1: x1, y1: y1, g: g, cell: cell, start: cnt, items: items };
  };

  NetMap.prototype.nearest = function (px, py, rpx) {
    var G = this.grid, w = this.toWorld(px, py), r = rpx / this.s, best = -1, bd = r * r;
    var cx0 = Math.max(0, Math.floor((w[0] - r - G.x0) / G.cell));
    var cx1 = Math.min(G.g - 1, Math.floor((w[0] + r - G.x0) / G.cell));
    var cy0 = Math.max(0, Math.floor((w[1] - r - G.y0) / G.cell));
    var cy1 = Math.min(G.g - 1, Math.floor((w[1] + r - G.y0) / G.cell));
    if ((cx1 - cx0 + 1) * (cy1 - cy0 + 1) > 4096) { return -1; }  // zoomed far out
    for (var cy = cy0; cy <= cy1; cy++) {
      for (var cx = cx0; cx <= cx1; cx++) {
        var c = cy * G.g + cx;
        for (var k = G.start[c]; k < G.start[c + 1]; k++) {
          var i = G.items[k], dx = this.wx[i] - w[0], dy = this.wy[i] - w[1], dd = dx * dx + dy * dy;
          if (this.isDriver[i] || this.flags.unreached[i]) { dd *= 0.5; }  // marks win ties
          if (dd <= bd) { bd = dd; best = i; }
        }
      }
    }
    return best;
  };

  /* ------------------------------------------------------------------- UI */
  NetMap.prototype.ui = function () {
    var self = this, d = this.d, root = this.root;
    root.textContent = "";
    var bar = el("div", "ncm-bar");
    var search = el("input", "ncm-search");
    search.type = "search";
    search.placeholder = "find a state by name";
    search.setAttribute("aria-label", "find a state by name");
    var fit = el("button", "ncm-fit", "whole network");
    fit.type = "button";
    var hint = el("span", "ncm-hint", "drag to pan, wheel or +/- to zoom, click a state or a link for details");
    bar.appendChild(search); bar.appendChild(fit); bar.appendChild(hint);
    var results = el("ul", "ncm-results");
    var body = el("div", "ncm-body");
    var stage = el("div", "ncm-stage");
    var canvas = el("canvas", "ncm-canvas");
    canvas.tabIndex = 0;
    canvas.setAttribute("aria-label", "network map");
    var tip = el("div", "ncm-tip");
    stage.appendChild(canvas); stage.appendChild(tip);
    var side = el("div", "ncm-side");
    var details = el("div", "ncm-details");
    details.appendChild(el("p", "ncm-muted", "Click a state (or find one by name) to see its role, the input that reaches it and its control path; click a link to see which way it acts" + (d.elements ? " and the branch it belongs to." : ".")));
    var legend = el("div", "ncm-legend");
    legend.appendChild(el("h3", null, "Layers"));
    side.appendChild(legend); side.appendChild(details);
    body.appendChild(stage); body.appendChild(side);
    root.appendChild(bar); root.appendChild(results); root.appendChild(body);
    var summary = el("p", "ncm-summary");
    d.summary.forEach(function (line) { summary.appendChild(el("span", null, line)); });
    root.appendChild(summary);
    this.canvas = canvas; this.ctx = canvas.getContext("2d"); this.tip = tip;
    this.details = details; this.results = results; this.search = search; this.stage = stage;
    this.base = document.createElement("canvas");

    d.layers.forEach(function (L) {
      var row = el("label", "ncm-layer");
      var box = el("input");
      box.type = "checkbox";
      box.checked = L.on;
      box.setAttribute("data-layer", L.key);
      self.layers[L.key] = L.on;
      box.addEventListener("change", function () {
        self.layers[L.key] = box.checked;
        self.invalidate();
      });
      var sw = el("canvas", "ncm-swatch");
      sw.width = 44; sw.height = 22;
      self.swatch(sw, L.key);
      row.appendChild(box); row.appendChild(sw);
      row.appendChild(el("span", null, L.label + " (" + L.count + ")"));
      legend.appendChild(row);
    });
    d.notes.forEach(function (t) { legend.appendChild(el("p", "ncm-muted", t)); });

    fit.addEventListener("click", function () { self.fit(); self.invalidate(); });
    var timer = null;
    search.addEventListener("input", function () {
      clearTimeout(timer);
      timer = setTimeout(function () { self.listMatches(search.value); }, 120);
    });
    search.addEventListener("keydown", function (ev) {
      if (ev.key === "Enter") {
        var hits = self.find(search.value, 1);
        if (hits.length) { self.select(hits[0], true); }
        ev.preventDefault();
      }
    });

    // pointer: pan by drag, details on click, tooltip on hover
    var drag = null;
    canvas.addEventListener("pointerdown", function (ev) {
      drag = { x: ev.clientX, y: ev.clientY, moved: 0 };
      canvas.setPointerCapture(ev.pointerId);
    });
    canvas.addEventListener("pointermove", function (ev) {
      var r = canvas.getBoundingClientRect();
      if (drag) {
        var dx = ev.clientX - drag.x, dy = ev.clientY - drag.y;
        drag.moved += Math.abs(dx) + Math.abs(dy);
        drag.x = ev.clientX; drag.y = ev.clientY;
        self.panBy(dx, dy);
      } else {
        self.hover(ev.clientX - r.left, ev.clientY - r.top);
      }
    });
    canvas.addEventListener("pointerup", function (ev) {
      var r = canvas.getBoundingClientRect();
      if (drag && drag.moved < 4) {
        var px = ev.clientX - r.left, py = ev.clientY - r.top;
        var i = self.nearest(px, py, 12);
        if (i >= 0) { self.select(i, false); }
        else {
          var e = self.nearestLink(px, py, 6);
          if (e) { self.selectLink(e[0], e[1]); }
        }
      }
      drag = null;
    });
    canvas.addEventListener("pointerleave", function () { tip.style.display = "none"; });
    canvas.addEventListener("wheel", function (ev) {
      ev.preventDefault();
      var r = canvas.getBoundingClientRect();
      self.zoomAt(ev.clientX - r.left, ev.clientY - r.top, Math.exp(-ev.deltaY * 0.0015));
    }, { passive: false });
    canvas.addEventListener("keydown", function (ev) {
      var k = ev.key, step = 60;
      if (k === "+" || k === "=") { self.zoomAt(self.W / 2, self.H / 2, 1.4); }
      else if (k === "-") { self.zoomAt(self.W / 2, self.H / 2, 1 / 1.4); }
      else if (k === "ArrowLeft") { self.panBy(step, 0); }
      else if (k === "ArrowRight") { self.panBy(-step, 0); }
      else if (k === "ArrowUp") { self.panBy(0, step); }
      else if (k === "ArrowDown") { self.panBy(0, -step); }
      else { return; }
      ev.preventDefault();
    });
    if (window.ResizeObserver) {
      new ResizeObserver(function () { self.resize(); }).observe(stage);
    }
    this.resize();
  };

  NetMap.prototype.swatch = function (c, key) {
    var ctx = c.getContext("2d");
    if (STYLE[key] && STYLE[key].size) {
      drawPoints(ctx, key, [22], [12], 9);  // the legend's swatch is 22 px high
      return;
    }
    ctx.beginPath();
    if (key === "states" || key === "roles") {
      var fills = key === "roles" ? STYLE.roles.fill : [STYLE.states.fill];
      fills.forEach(function (f, k) {
        ctx.beginPath(); circle(ctx, 10 + 12 * k, 11, 4);
        ctx.fillStyle = f; ctx.fill(); ctx.strokeStyle = STYLE.states.stroke; ctx.lineWidth = 1; ctx.stroke();
      });
      return;
    }
    if (key === "critical") {
      lineStyle(ctx, "critical", 1); ctx.moveTo(4, 11); ctx.lineTo(40, 11); ctx.stroke();
      ctx.beginPath(); lineStyle(ctx, "paths", 1); ctx.strokeStyle = "#FFFFFF"; ctx.lineWidth = 1.5;
      ctx.moveTo(4, 11); ctx.lineTo(40, 11); ctx.stroke();
      return;
    }
    if (STYLE[key]) {
      lineStyle(ctx, key, 1); ctx.moveTo(4, 11); ctx.lineTo(40, 11); ctx.stroke();
    }
  };

  /* ------------------------------------------------------------ view state */
  NetMap.prototype.resize = function () {
    var r = this.stage.getBoundingClientRect();
    var W = Math.max(50, Math.round(r.width)), H = Math.max(50, Math.round(r.height));
    var dpr = window.devicePixelRatio || 1;
    if (W === this.W && H === this.H && dpr === this.dpr) { return; }
    var first = this.W === undefined;
    this.W = W; this.H = H; this.dpr = dpr;
    this.canvas.width = Math.round(W * dpr); this.canvas.height = Math.round(H * dpr);
    this.canvas.style.width = W + "px"; this.canvas.style.height = H + "px";
    this.base.width = this.canvas.width; this.base.height = this.canvas.height;
    if (first || this.s === undefined) { this.fit(); }
    this.baseView = null;
    this.renderNow();
  };

  NetMap.prototype.fit = function () {
    var G = this.grid;
    if (!G || !this.W) { return; }
    var w = Math.max(G.x1 - G.x0, 1e-9), h = Math.max(G.y1 - G.y0, 1e-9);
    var pad = 28;
    this.s = Math.min((this.W - 2 * pad) / w, (this.H - 2 * pad) / h);
    if (!isFinite(this.s) || this.s <= 0) { this.s = 1; }
    this.tx = this.W / 2 - (G.x0 + G.x1) / 2 * this.s;
    this.ty = this.H / 2 + (G.y0 + G.y1) / 2 * this.s;
    this.s0 = this.s;
  };

  NetMap.prototype.toWorld = function (px, py) { return [(px - this.tx) / this.s, (this.ty - py) / this.s]; };
  NetMap.prototype.screenOf = function (i) { return [this.wx[i] * this.s + this.tx, this.ty - this.wy[i] * this.s]; };

  NetMap.prototype.panBy = function (dx, dy) { this.tx += dx; this.ty += dy; this.moved(); };
  NetMap.prototype.zoomAt = function (px, py, f) {
    var s = Math.max(this.s0 * 0.2, Math.min(this.s0 * 1e5, this.s * f));
    f = s / this.s;
    this.tx = px - (px - this.tx) * f; this.ty = py - (py - this.ty) * f; this.s = s;
    this.moved();
  };
  NetMap.prototype.centreOn = function (i) {
    var want = Math.max(this.s, this.s0 * Math.min(40, Math.max(4, Math.sqrt(this.n) / 4)));
    this.s = Math.min(want, this.s0 * 1e5);
    this.tx = this.W / 2 - this.wx[i] * this.s; this.ty = this.H / 2 + this.wy[i] * this.s;
    this.invalidate();
  };

  /* the view moved: draw at once from the cached base, redraw it sharp when at rest */
  NetMap.prototype.moved = function () {
    var self = this;
    this.schedule(this.baseCost > 12);
    clearTimeout(this.restTimer);
    this.restTimer = setTimeout(function () { self.invalidate(); }, 160);
  };
  NetMap.prototype.invalidate = function () { this.baseView = null; this.schedule(false); };
  NetMap.prototype.schedule = function (cheap) {
    var self = this;
    this.cheap = this.pending ? (this.cheap && cheap) : cheap;
    if (this.pending) { return; }
    this.pending = true;
    window.requestAnimationFrame(function () {
      self.pending = false;
      try { self.frame(self.cheap); } catch (e) { self.errors.push(String(e)); throw e; }
    });
  };
  NetMap.prototype.renderNow = function () { this.baseView = null; this.frame(false); };

  NetMap.prototype.frame = function (cheap) {
    var t0 = performance.now(), ctx = this.ctx, dpr = this.dpr;
    if (!this.W) { return; }
    if (!cheap || !this.baseView) {
      var tb = performance.now();
      this.drawBase();
      this.baseCost = performance.now() - tb;
      this.baseView = { s: this.s, tx: this.tx, ty: this.ty };
    }
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.globalAlpha = 1;
    ctx.fillStyle = "#FFFFFF";
    ctx.fillRect(0, 0, this.canvas.width, this.canvas.height);
    var b = this.baseView, k = this.s / b.s;
    var ox = (this.tx - b.tx * k) * dpr, oy = (this.ty - b.ty * k) * dpr;
    ctx.drawImage(this.base, ox, oy, this.base.width * k, this.base.height * k);
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    this.drawMarks(ctx);
    var dt = performance.now() - t0;
    this.frameTimes.push(dt);
    if (this.frameTimes.length > 600) { this.frameTimes.shift(); }
    this.lastFrame = { ms: dt, cheap: !!cheap };
    if (this.firstRenderMs === undefined) {
      this.firstRenderMs = performance.now() - T_START;  // from the renderer's start
      this.firstFrameAt = performance.now();              // from navigation start
    }
  };

  /* links of one layer as one path (segments off screen are skipped) */
  NetMap.prototype.strokeLinks = function (ctx, a, key, alpha) {
    var s = this.s, tx = this.tx, ty = this.ty, wx = this.wx, wy = this.wy, W = this.W, H = this.H;
    var count = 0, j, u, v, x1, y1, x2, y2, seen = 0;
    for (j = 0; j < a.length; j += 2) {   // how many are on screen decides the pen
      u = a[j]; v = a[j + 1];
      x1 = wx[u] * s + tx; y1 = ty - wy[u] * s; x2 = wx[v] * s + tx; y2 = ty - wy[v] * s;
      if (!((x1 < 0 && x2 < 0) || (x1 > W && x2 > W) || (y1 < 0 && y2 < 0) || (y1 > H && y2 > H))) { seen++; }
    }
    lineStyle(ctx, key, alpha);
    if (seen > DASH_UP_TO) { ctx.setLineDash([]); }  // dashes cost dearly in bulk
    if (seen > THIN_ABOVE) {  // overview: hairlines (wide strokes are slow to rasterize)
      ctx.lineWidth = Math.min(ctx.lineWidth, 1); ctx.lineCap = "butt";
    }
    this.busy = seen;
    ctx.beginPath();
    for (j = 0; j < a.length; j += 2) {
      u = a[j]; v = a[j + 1];
      x1 = wx[u] * s + tx; y1 = ty - wy[u] * s; x2 = wx[v] * s + tx; y2 = ty - wy[v] * s;
      if ((x1 < 0 && x2 < 0) || (x1 > W && x2 > W) || (y1 < 0 && y2 < 0) || (y1 > H && y2 > H)) { continue; }
      ctx.moveTo(x1, y1); ctx.lineTo(x2, y2); count++;
      // short paths: one path of 10^5 crossing segments costs far more than many small
      if ((count & 1023) === 0) { ctx.stroke(); ctx.beginPath(); }
    }
    ctx.stroke();
    ctx.globalAlpha = 1;
    ctx.setLineDash([]);
    return count;
  };

  /* arrowheads on control links once they are long enough on screen */
  NetMap.prototype.heads = function (ctx, a, color) {
    var s = this.s, tx = this.tx, ty = this.ty, wx = this.wx, wy = this.wy;
    if (this.busy > HEADS_UP_TO) { return; }
    ctx.beginPath();
    for (var j = 0; j < a.length; j += 2) {
      var x1 = wx[a[j]] * s + tx, y1 = ty - wy[a[j]] * s, x2 = wx[a[j + 1]] * s + tx, y2 = ty - wy[a[j + 1]] * s;
      var dx = x2 - x1, dy = y2 - y1, L = Math.sqrt(dx * dx + dy * dy);
      if (L < 40 || x2 < 0 || x2 > this.W || y2 < 0 || y2 > this.H) { continue; }
      var ux = dx / L, uy = dy / L, mx = x1 + dx * 0.6, my = y1 + dy * 0.6;
      ctx.moveTo(mx + ux * 5, my + uy * 5);
      ctx.lineTo(mx - ux * 4 - uy * 4, my - uy * 4 + ux * 4);
      ctx.lineTo(mx - ux * 4 + uy * 4, my - uy * 4 - ux * 4);
      ctx.closePath();
    }
    ctx.fillStyle = color;
    ctx.fill();
  };

  NetMap.prototype.drawBase = function () {
    var d = this.d, ctx = this.base.getContext("2d"), L = this.layers, drawn = {};
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.clearRect(0, 0, this.base.width, this.base.height);
    ctx.setTransform(this.dpr, 0, 0, this.dpr, 0, 0);
    var nl = d.links.length / 2;
    // plain links fade as more of them share the screen
    var zoom = this.s / this.s0;
    var alpha = Math.max(0.08, Math.min(0.85, 14 / Math.sqrt(Math.max(nl, 1)) * Math.sqrt(zoom)));
    var tc = performance.now(), costs = {};
    if (L.links) { drawn.links = this.strokeLinks(ctx, d.links, "links", alpha); }
    costs.links = performance.now() - tc; tc = performance.now();
    if (L.critical && d.critical) { drawn.critical = this.strokeLinks(ctx, d.critical, "critical", 0.9); }
    var calpha = d.paths.length + d.cycles.length > 20000 ? 0.55 : 0.95;
    if (L.paths) {
      drawn.paths = this.strokeLinks(ctx, d.paths, "paths", calpha);
      this.heads(ctx, d.paths, STYLE.paths.color);
    }
    if (L.cycles) {
      drawn.cycles = this.strokeLinks(ctx, d.cycles, "cycles", calpha);
      this.heads(ctx, d.cycles, STYLE.cycles.color);
    }
    if (L.critical && d.critical) {   // white core inside the dark casing
      ctx.save(); STYLE.critical.width = 1.4; var c0 = STYLE.critical.color; STYLE.critical.color = "#FFFFFF";
      this.strokeLinks(ctx, d.critical, "critical", 0.9);
      STYLE.critical.width = 4.5; STYLE.critical.color = c0; ctx.restore();
    }
    costs.matched = performance.now() - tc; tc = performance.now();
    if (L.states) { drawn.states = this.drawStates(ctx); }
    costs.states = performance.now() - tc; tc = performance.now();
    // many flagged states on screen: drawn once into the cached base (still last, still
    // at a fixed pixel size with a halo) instead of on every frame while the view moves
    this.marksInBase = this.countMarks() > MARKS_EVERY_FRAME_UP_TO;
    if (this.marksInBase) { this.drawFlagged(ctx, drawn); }
    costs.marks = performance.now() - tc;
    this.costs = costs;
    this.drawnBase = drawn;
  };

  NetMap.prototype.drawStates = function (ctx) {
    var n = this.n, s = this.s, tx = this.tx, ty = this.ty, W = this.W, H = this.H;
    var roles = this.layers.roles && this.d.roles ? this.d.roles : null;
    // radius in pixels: grows as the user zooms in, small when many states share the view
    var r = Math.max(1.2, Math.min(5, 3.2 * Math.sqrt(this.s / this.s0) * Math.min(1, 30 / Math.sqrt(Math.max(n, 1)) + 0.25)));
    var groups = roles ? [[], [], []] : [[]];
    var count = 0, i;
    for (i = 0; i < n; i++) {
      var x = this.wx[i] * s + tx, y = ty - this.wy[i] * s;
      if (x < -r || x > W + r || y < -r || y > H + r) { continue; }
      groups[roles ? roles[i] : 0].push(x, y);
      count++;
    }
    var fills = roles ? STYLE.roles.fill : [STYLE.states.fill];
    for (var g = 0; g < groups.length; g++) {
      var p = groups[g];
      if (!p.length) { continue; }
      ctx.beginPath();
      if (r < 2.2 && count > 5000) {
        ctx.fillStyle = roles ? fills[g] : STYLE.states.stroke;
        for (i = 0; i < p.length; i += 2) { ctx.fillRect(p[i] - r, p[i + 1] - r, 2 * r, 2 * r); }
        if (roles) { ctx.strokeStyle = STYLE.roles.stroke; ctx.lineWidth = 0.5; ctx.stroke(); }
      } else {
        for (i = 0; i < p.length; i += 2) { circle(ctx, p[i], p[i + 1], r); }
        ctx.fillStyle = fills[g];
        ctx.fill();
        ctx.strokeStyle = roles ? STYLE.roles.stroke : STYLE.states.stroke;
        ctx.lineWidth = r > 2.5 ? 1 : 0.6;
        ctx.stroke();
      }
    }
    return count;
  };

  NetMap.prototype.visible = function (idx) {
    var xs = [], ys = [], m = 14;
    for (var j = 0; j < idx.length; j++) {
      var p = this.screenOf(idx[j]);
      if (p[0] < -m || p[0] > this.W + m || p[1] < -m || p[1] > this.H + m) { continue; }
      xs.push(p[0]); ys.push(p[1]);
    }
    return [xs, ys];
  };

  NetMap.prototype.drawMarks = function (ctx) {
    var d = this.d, L = this.layers, drawn = {}, self = this;
    var k;
    for (k in this.drawnBase) { drawn[k] = this.drawnBase[k]; }
    // the selection's paths: the way from its input and its control path
    if (this.selected >= 0 && this.trail) {
      ctx.setLineDash([]);
      ctx.lineCap = "round";
      ctx.beginPath();
      for (var j = 0; j + 1 < this.trail.length; j++) {
        var a = this.screenOf(this.trail[j]), b = this.screenOf(this.trail[j + 1]);
        ctx.moveTo(a[0], a[1]); ctx.lineTo(b[0], b[1]);
      }
      ctx.strokeStyle = "rgba(255,255,255,0.9)"; ctx.lineWidth = 7; ctx.stroke();
      ctx.strokeStyle = INK; ctx.lineWidth = 3; ctx.stroke();
    }
    if (this.selLink) {   // the selected link, cased like the selection's path
      var p0 = this.screenOf(this.selLink[0]), p1 = this.screenOf(this.selLink[1]);
      ctx.setLineDash([]); ctx.lineCap = "round";
      ctx.beginPath(); ctx.moveTo(p0[0], p0[1]); ctx.lineTo(p1[0], p1[1]);
      ctx.strokeStyle = "rgba(255,255,255,0.9)"; ctx.lineWidth = 8; ctx.stroke();
      ctx.strokeStyle = INK; ctx.lineWidth = 3.5; ctx.stroke();
      drawn.selectedLink = 1;
    }
    // flagged states last, at a fixed size in screen pixels, with a halo
    if (!this.marksInBase) { this.drawFlagged(ctx, drawn); }
    if (this.selected >= 0) {
      var p = this.screenOf(this.selected);
      ctx.beginPath(); circle(ctx, p[0], p[1], 15);
      ctx.strokeStyle = "#FFFFFF"; ctx.lineWidth = 7; ctx.stroke();
      ctx.strokeStyle = INK; ctx.lineWidth = 2.5; ctx.stroke();
      drawn.selected = 1;
    }
    this.drawn = drawn;
  };

  NetMap.prototype.flaggedLists = function () {
    var d = this.d, L = this.layers, self = this, out = [];
    ["disturbances", "fragile", "dilations", "unreached", "fixes", "drivers"].forEach(function (key) {
      if (!L[key]) { return; }
      var idx = key === "drivers" ? d.drivers : key === "disturbances" ? self.disturbed : d[key];
      if (idx && idx.length) { out.push([key, idx]); }
    });
    return out;
  };
  NetMap.prototype.countMarks = function () {
    var total = 0, self = this;
    this.flaggedLists().forEach(function (kv) { total += self.visible(kv[1])[0].length; });
    return total;
  };
  NetMap.prototype.drawFlagged = function (ctx, drawn) {
    var self = this;
    this.flaggedLists().forEach(function (kv) {
      var v = self.visible(kv[1]);
      drawPoints(ctx, kv[0], v[0], v[1]);
      drawn[kv[0]] = v[0].length;
    });
  };

  /* --------------------------------------------------------- find, select */
  NetMap.prototype.find = function (text, limit) {
    var q = String(text).trim().toLowerCase(), names = this.d.names, out = [], i;
    if (!q) { return out; }
    for (i = 0; i < names.length && out.length < limit; i++) {
      if (names[i].toLowerCase() === q) { out.push(i); }
    }
    for (i = 0; i < names.length && out.length < limit; i++) {
      var nm = names[i].toLowerCase();
      if (nm !== q && nm.indexOf(q) === 0) { out.push(i); }
    }
    for (i = 0; i < names.length && out.length < limit; i++) {
      var t = names[i].toLowerCase();
      if (t.indexOf(q) > 0) { out.push(i); }
    }
    return out;
  };

  NetMap.prototype.listMatches = function (text) {
    var self = this, hits = this.find(text, 12);
    this.results.textContent = "";
    hits.forEach(function (i) {
      var li = el("li");
      var b = el("button", "ncm-hit", self.d.names[i]);
      b.type = "button";
      b.addEventListener("click", function () { self.select(i, true); });
      li.appendChild(b);
      self.results.appendChild(li);
    });
    if (String(text).trim() && !hits.length) { this.results.appendChild(el("li", "ncm-muted", "no state has this name")); }
  };

  /* walk a predecessor array from i; stops at -1 or when a state repeats */
  function walk(pred, i, limit) {
    var seen = {}, out = [i], cyc = false;
    seen[i] = 1;
    while (out.length < limit) {
      var p = pred[out[out.length - 1]];
      if (p < 0) { break; }
      if (seen[p]) { cyc = true; break; }
      seen[p] = 1; out.push(p);
    }
    return { chain: out, cycle: cyc };
  }

  function shortList(names, idx) {
    if (idx.length <= 7) { return idx.map(function (i) { return names[i]; }).join(" \u2192 "); }
    return idx.slice(0, 3).map(function (i) { return names[i]; }).join(" \u2192 ") + " \u2192 \u2026 (" +
      (idx.length - 6) + " more) \u2192 " + idx.slice(-3).map(function (i) { return names[i]; }).join(" \u2192 ");
  }

  NetMap.prototype.facts = function (i) {
    var d = this.d, names = d.names, out = [];
    var roles = [];
    if (this.isDriver[i]) { roles.push("driver node"); }
    if (this.flags.fixes[i]) { roles.push("proposed input site (smallest fix)"); }
    if (this.flags.unreached[i]) { roles.push("no input reaches this state"); }
    if (this.flags.dilations[i]) { roles.push("in a dilation (fed by fewer states than they number)"); }
    if (this.flags.fragile[i]) { roles.push("single point of failure"); }
    if (d.roles) { roles.push("role: " + ROLE_WORDS[d.roles[i]]); }
    else if (d.role_all) { roles.push("role: " + d.role_all + " (every state has this role)"); }
    out.push(["role", roles.length ? roles.join("; ") : "state (nothing to report)"]);
    if (this.isDriver[i]) {
      out.push(["inputs acting here", (this.inputsAt[i] || []).join(", ") || "dedicated input"]);
    }
    // which input reaches it: shortest way from any driver (breadth-first over links)
    var r = walk(d.bpred, i, 100000).chain;
    var head = r[r.length - 1];
    if (this.isDriver[i]) {
      out.push(["reached by", "its own input" + ((this.inputsAt[i] || []).length ? " (" + this.inputsAt[i].join(", ") + ")" : "")]);
    } else if (this.isDriver[head]) {
      var ins = (this.inputsAt[head] || []).join(", ");
      out.push(["reached by", (ins ? ins + " at " : "the input at ") + names[head] + ", " + (r.length - 1) + " link(s) away: " + shortList(names, r.slice().reverse())]);
    } else {
      out.push(["reached by", "no input (unreached)"]);
    }
    // its control path: matched links back to where the path starts
    var m = walk(d.mpred, i, 100000), c = m.chain;
    if (m.cycle) {
      out.push(["control path", "on a control cycle of " + c.length + " state(s): " + shortList(names, c.slice().reverse())]);
    } else if (c.length === 1) {
      out.push(["control path", this.isDriver[i] ? "starts here (the input drives this state)" : "starts here (no matched link enters this state)"]);
    } else {
      var start = c[c.length - 1];
      out.push(["control path", "position " + (c.length - 1) + " on the path from " + names[start] +
        (this.isDriver[start] ? " (driver)" : " (needs an input)") + ": " + shortList(names, c.slice().reverse())]);
    }
    this.trail = this.isDriver[head] && r.length > 1 ? r : (c.length > 1 ? c : null);
    out.push(["links", this.indeg[i] + " in, " + this.outdeg[i] + " out" + (this.loopAt[i] ? ", self-loop (self-dynamics)" : "")]);
    if (this.flags.fragile[i]) {
      out.push(["single point of failure", (this.fragileWhy[i] || ["its loss alone breaks the design"]).join("; ")]);
    }
    if (d.disturbances) {
      var felt = this.disturbedBy[i] || [];
      out.push(["disturbances felt directly", felt.length ? felt.join(", ") : "none"]);
    }
    var unit = d.geo ? ["lon", "lat"] : ["x", "y"];
    out.push(["position", (d.placed && !d.placed[i] ? "laid out (no coordinates in the file) " : "") +
      unit[0] + " " + fmt(this.wx[i]) + ", " + unit[1] + " " + fmt(this.wy[i])]);
    return out;
  };

  function fmt(v) { return Math.abs(v) >= 1000 ? v.toFixed(0) : v.toPrecision(5).replace(/\.?0+$/, ""); }

  /* the drawn link nearest to a screen point (within tol px): [source, target] or null */
  NetMap.prototype.nearestLink = function (px, py, tol) {
    var d = this.d, L = this.layers, s = this.s, tx = this.tx, ty = this.ty, wx = this.wx, wy = this.wy;
    var best = null, bd = tol * tol;
    ["critical", "paths", "cycles", "links"].forEach(function (key) {
      var a = d[key];
      if (!L[key] || !a) { return; }
      for (var j = 0; j < a.length; j += 2) {
        var x1 = wx[a[j]] * s + tx, y1 = ty - wy[a[j]] * s, x2 = wx[a[j + 1]] * s + tx, y2 = ty - wy[a[j + 1]] * s;
        if (px < Math.min(x1, x2) - tol || px > Math.max(x1, x2) + tol ||
            py < Math.min(y1, y2) - tol || py > Math.max(y1, y2) + tol) { continue; }
        var dx = x2 - x1, dy = y2 - y1, LL = dx * dx + dy * dy;
        var t = LL > 0 ? Math.max(0, Math.min(1, ((px - x1) * dx + (py - y1) * dy) / LL)) : 0;
        var ex = x1 + t * dx - px, ey = y1 + t * dy - py, dd = ex * ex + ey * ey;
        if (dd < bd) { bd = dd; best = [a[j], a[j + 1]]; }
      }
    });
    return best;
  };

  /* which drawn layers hold the link u -> v (and whether v -> u is a link too) */
  NetMap.prototype.linkFacts = function (u, v) {
    var d = this.d, n = this.n, out = [], back = false;
    var words = { paths: "control path (matched link)", cycles: "control cycle (matched link)",
      critical: "critical", links: "other link" };
    ["critical", "paths", "cycles", "links"].forEach(function (key) {
      var a = d[key] || [];
      for (var j = 0; j < a.length; j += 2) {
        if (a[j] === u && a[j + 1] === v) { out.push(words[key]); }
        if (a[j] === v && a[j + 1] === u) { back = true; }
      }
    });
    var names = d.names, f = [];
    f.push(["link", names[u] + " influences " + names[v] + (back ? " (and " + names[v] + " influences " + names[u] + ": a link each way)" : "")]);
    if (out.length) { f.push(["drawn as", out.join("; ")]); }
    if (d.elements) {
      var E = d.elements, ba = E.bus[u], bb = E.bus[v];
      var own = ba >= 0 && bb >= 0 && ba !== bb ? this.owners.get(Math.min(ba, bb) * E.n_buses + Math.max(ba, bb)) || [] : [];
      f.push(["element", own.length ? own.map(function (k) { return E.ids[k] + " (" + E.kind_names[E.kinds[k]] + ")"; }).join(", ")
        : ba >= 0 && ba === bb ? "none: a link inside one bus is part of the model"
        : "none: no branch of the case joins these states"]);
      if (own.length > 1) { f.push(["parallel circuits", own.length + " branches join these buses"]); }
    }
    return f;
  };

  NetMap.prototype.selectLink = function (u, v) {
    this.selected = -1;
    this.trail = null;
    this.selLink = [u, v];
    var box = this.details;
    box.textContent = "";
    box.appendChild(el("h3", "ncm-name", this.d.names[u] + " \u2192 " + this.d.names[v]));
    var dl = el("dl");
    this.linkFacts(u, v).forEach(function (kv) { dl.appendChild(el("dt", null, kv[0])); dl.appendChild(el("dd", null, kv[1])); });
    box.appendChild(dl);
    this.invalidate();
  };

  NetMap.prototype.select = function (i, centre) {
    this.selected = i;
    this.selLink = null;
    this.trail = null;
    var f = this.facts(i), box = this.details;
    box.textContent = "";
    box.appendChild(el("h3", "ncm-name", this.d.names[i]));
    var dl = el("dl");
    f.forEach(function (kv) { dl.appendChild(el("dt", null, kv[0])); dl.appendChild(el("dd", null, kv[1])); });
    box.appendChild(dl);
    if (centre) { this.centreOn(i); } else { this.invalidate(); }
  };

  NetMap.prototype.hover = function (px, py) {
    var i = this.nearest(px, py, 10), tip = this.tip;
    if (i < 0) { tip.style.display = "none"; return; }
    var words = [];
    if (this.isDriver[i]) { words.push("driver"); }
    if (this.flags.unreached[i]) { words.push("unreached"); }
    if (this.flags.dilations[i]) { words.push("dilation"); }
    if (this.flags.fixes[i]) { words.push("add an input here"); }
    if (this.flags.fragile[i]) { words.push("single point of failure"); }
    tip.textContent = this.d.names[i] + (words.length ? " \u2014 " + words.join(", ") : "");
    tip.style.left = Math.min(px + 14, this.W - 160) + "px";
    tip.style.top = (py + 12) + "px";
    tip.style.display = "block";
  };

  /* -------------------------------------------------------------- start */
  var T_START = performance.now();
  window.netctlMaps = window.netctlMaps || [];
  function start() {
    var roots = document.querySelectorAll("[data-netctl-map]");
    for (var k = 0; k < roots.length; k++) {
      var root = roots[k];
      if (root.getAttribute("data-started")) { continue; }
      root.setAttribute("data-started", "1");
      var src = document.getElementById(root.getAttribute("data-netctl-map"));
      var data = JSON.parse(src.textContent);
      window.netctlMaps.push(new NetMap(root, data));
    }
  }
  if (document.readyState === "loading") { document.addEventListener("DOMContentLoaded", start); }
  else { start(); }
})();
