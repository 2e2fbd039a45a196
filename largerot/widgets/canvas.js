// largerot path explorer: deformed shape beside the equilibrium path, on one canvas.
// Data arrive once as binary buffers; a change of `index` only redraws (one frame per
// animation frame at most). Static parts are drawn into an off-screen layer.

const COLORS = {
  deformed: "#1f5fa8", bar: "#2e8b57", ghost: "#b5b5b5", support: "#333333",
  load: "#c0392b", constant: "#7f7f7f", stable: "#1f5fa8", unstable: "#e67e22",
  critical: "#8e44ad", marker: "#c0392b", axis: "#555555", grid: "#e6e6e6",
  N: ["rgba(46,139,87,0.35)", "#2e8b57"], V: ["rgba(142,68,173,0.30)", "#8e44ad"],
  M: ["rgba(192,57,43,0.30)", "#c0392b"],
};

function typed(model, name, Kind) {
  const v = model.get(name);
  if (!v || !v.byteLength) return new Kind(0);
  const buf = v.buffer ? v.buffer : v;
  const off = v.byteOffset || 0;
  if (off % Kind.BYTES_PER_ELEMENT === 0) return new Kind(buf, off, v.byteLength / Kind.BYTES_PER_ELEMENT);
  return new Kind(buf.slice(off, off + v.byteLength));
}

function fmt(v) {
  if (!isFinite(v)) return "—";
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-4) return v.toExponential(3);
  return String(parseFloat(v.toPrecision(4)));
}

function niceTicks(lo, hi, n) {
  const span = hi - lo || 1;
  const raw = span / n, p = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [1, 2, 5, 10].map((m) => m * p).find((s) => s >= raw) || raw;
  const out = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + 1e-9 * span; t += step) out.push(t);
  return out;
}

function render({ model, el }) {
  const stats = (window.__largerot = window.__largerot || { draws: 0, drawMs: 0, widgets: 0 });
  stats.widgets += 1;
  const root = document.createElement("div");
  root.className = "largerot-explorer";
  root.style.fontFamily = "sans-serif";
  const canvas = document.createElement("canvas");
  canvas.className = "largerot-canvas";
  canvas.style.display = "block";
  canvas.style.cursor = "crosshair";
  const readout = document.createElement("div");
  readout.className = "largerot-readout";
  readout.style.cssText = "font: 13px monospace; padding: 4px 2px; white-space: pre-wrap;";
  root.append(canvas, readout);
  el.append(root);

  const layer = document.createElement("canvas");
  let d = {};        // decoded data
  let pending = false;

  function decode() {
    d.frames = typed(model, "frames", Float32Array);
    d.ghost = typed(model, "ghost", Float32Array);
    d.starts = typed(model, "starts", Int32Array);
    d.kinds = typed(model, "kinds", Uint8Array);
    d.cx = typed(model, "curve_x", Float32Array);
    d.cy = typed(model, "curve_y", Float32Array);
    d.stable = typed(model, "stable", Uint8Array);
    d.points = typed(model, "points", Int32Array);
    d.table = typed(model, "table", Float64Array);
    d.forces = typed(model, "forces", Float32Array);
    d.ends = typed(model, "element_ends", Int32Array);
    d.nv = model.get("n_vertices");
    d.nf = model.get("n_frames");
    d.labels = model.get("table_labels");
    d.bounds = model.get("bounds");
    d.critical = model.get("critical");
    d.symbols = model.get("symbols");
  }

  function geometry() {
    const W = model.get("width"), H = model.get("height");
    const split = Math.round(W * 0.48);
    const g = { W, H, shape: [8, 8, split - 16, H - 16], plot: [split + 56, 12, W - split - 72, H - 52] };
    const [x0, x1, y0, y1] = d.bounds;
    const size = Math.max(x1 - x0, y1 - y0) || 1;
    const pad = 0.1 * size;
    const sx = g.shape[2] / (x1 - x0 + 2 * pad), sy = g.shape[3] / (y1 - y0 + 2 * pad);
    const s = Math.min(sx, sy);
    const cx = g.shape[0] + g.shape[2] / 2, cy = g.shape[1] + g.shape[3] / 2;
    const mx = (x0 + x1) / 2, my = (y0 + y1) / 2;
    g.size = size;
    g.scale = s;
    g.X = (x) => cx + (x - mx) * s;
    g.Y = (y) => cy - (y - my) * s;
    // the curve axes
    let xl = Infinity, xh = -Infinity, yl = Infinity, yh = -Infinity;
    for (let i = 0; i < d.cx.length; i++) {
      if (d.cx[i] < xl) xl = d.cx[i]; if (d.cx[i] > xh) xh = d.cx[i];
      if (d.cy[i] < yl) yl = d.cy[i]; if (d.cy[i] > yh) yh = d.cy[i];
    }
    if (!isFinite(xl)) { xl = 0; xh = 1; yl = 0; yh = 1; }
    if (xh - xl < 1e-12) { xl -= 0.5; xh += 0.5; }
    if (yh - yl < 1e-12) { yl -= 0.5; yh += 0.5; }
    const ex = 0.05 * (xh - xl), ey = 0.05 * (yh - yl);
    g.range = [xl - ex, xh + ex, yl - ey, yh + ey];
    const [px, py, pw, ph] = g.plot;
    g.PX = (x) => px + ((x - g.range[0]) / (g.range[1] - g.range[0])) * pw;
    g.PY = (y) => py + ph - ((y - g.range[2]) / (g.range[3] - g.range[2])) * ph;
    return g;
  }

  function strokes(ctx, g, xy, base) {
    const st = d.starts;
    for (let k = 0; k + 1 < st.length; k++) {
      ctx.beginPath();
      for (let v = st[k]; v < st[k + 1]; v++) {
        const x = g.X(xy[base + 2 * v]), y = g.Y(xy[base + 2 * v + 1]);
        if (v === st[k]) ctx.moveTo(x, y); else ctx.lineTo(x, y);
      }
      ctx.strokeStyle = d.kinds[k] === 1 ? COLORS.bar : ctx.strokeStyle;
      ctx.stroke();
    }
  }

  function hatch(ctx, x, y, w, angle) {
    // a ground line of width w centred on (x, y), hatched on the far side
    ctx.save();
    ctx.translate(x, y);
    ctx.rotate(angle);
    ctx.beginPath();
    ctx.moveTo(-w / 2, 0); ctx.lineTo(w / 2, 0);
    for (let t = -w / 2 + 3; t <= w / 2; t += 5) { ctx.moveTo(t, 0); ctx.lineTo(t - 4, 5); }
    ctx.stroke();
    ctx.restore();
  }

  function support(ctx, x, y, held) {
    ctx.save();
    ctx.strokeStyle = COLORS.support;
    ctx.fillStyle = "white";
    ctx.lineWidth = 1.4;
    const hx = held.includes("x"), hy = held.includes("y"), hr = held.includes("r");
    if (hx && hy && hr) {                 // clamp: a filled block with a ground line
      ctx.fillStyle = COLORS.support;
      ctx.fillRect(x - 9, y, 18, 5);
      hatch(ctx, x, y + 5, 24, 0);
    } else if (hx && hy) {                // pin: a triangle on hatched ground
      ctx.beginPath(); ctx.moveTo(x, y); ctx.lineTo(x - 8, y + 12); ctx.lineTo(x + 8, y + 12);
      ctx.closePath(); ctx.fill(); ctx.stroke();
      hatch(ctx, x, y + 12, 24, 0);
      ctx.beginPath(); ctx.arc(x, y, 2.5, 0, 2 * Math.PI); ctx.fill(); ctx.stroke();
    } else if (hx || hy) {                // roller: triangle on two wheels
      const a = hy ? 0 : -Math.PI / 2;
      ctx.translate(x, y); ctx.rotate(a);
      ctx.beginPath(); ctx.moveTo(0, 0); ctx.lineTo(-7, 10); ctx.lineTo(7, 10); ctx.closePath();
      ctx.fill(); ctx.stroke();
      for (const w of [-4, 4]) { ctx.beginPath(); ctx.arc(w, 13, 2.5, 0, 2 * Math.PI); ctx.stroke(); }
      hatch(ctx, 0, 16, 22, 0);
      if (hr) { ctx.fillStyle = COLORS.support; ctx.fillRect(-3, -3, 6, 6); }
    } else if (hr) {                      // rotation lock only: a square
      ctx.strokeRect(x - 4, y - 4, 8, 8);
    }
    ctx.restore();
  }

  function obstacle(ctx, g, o) {
    // a rigid obstacle of a contact: a face hatched on its solid side, or a disc
    ctx.save();
    ctx.strokeStyle = COLORS.support; ctx.lineWidth = 1.5;
    if (o.kind === "circle") {
      const [cx, cy] = o.centre;
      const r = Math.abs(g.X(cx + o.radius) - g.X(cx));
      ctx.fillStyle = "#dddddd";
      ctx.beginPath(); ctx.arc(g.X(cx), g.Y(cy), r, 0, 2 * Math.PI); ctx.fill(); ctx.stroke();
    } else {
      const ax = g.X(o.a[0]), ay = g.Y(o.a[1]), bx = g.X(o.b[0]), by = g.Y(o.b[1]);
      const len = Math.hypot(bx - ax, by - ay) || 1;
      const tx = (bx - ax) / len, ty = (by - ay) / len;
      const nx = o.normal[0], ny = -o.normal[1];          // screen y points down
      ctx.beginPath(); ctx.moveTo(ax, ay); ctx.lineTo(bx, by);
      ctx.lineWidth = 0.8;
      for (let s = 0; s <= len; s += 6) {
        const qx = ax + s * tx, qy = ay + s * ty;
        ctx.moveTo(qx, qy); ctx.lineTo(qx - 5 * (nx + tx), qy - 5 * (ny + ty));
      }
      ctx.stroke();
      ctx.lineWidth = 1.5; ctx.beginPath(); ctx.moveTo(ax, ay); ctx.lineTo(bx, by); ctx.stroke();
    }
    ctx.restore();
  }

  function drawLayer(g) {
    const dpr = window.devicePixelRatio || 1;
    layer.width = g.W * dpr; layer.height = g.H * dpr;
    const ctx = layer.getContext("2d");
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    ctx.fillStyle = "white"; ctx.fillRect(0, 0, g.W, g.H);
    ctx.strokeStyle = COLORS.grid; ctx.lineWidth = 1;
    ctx.strokeRect(...g.shape);
    // undeformed shape, ghosted
    if (model.get("show_ghost") && d.ghost.length) {
      ctx.save(); ctx.setLineDash([5, 4]); ctx.lineWidth = 1; ctx.strokeStyle = COLORS.ghost;
      strokes(ctx, g, d.ghost, 0); ctx.restore();
    }
    for (const s of d.symbols.supports || []) support(ctx, g.X(s.x), g.Y(s.y), s.held);
    for (const o of d.symbols.obstacles || []) obstacle(ctx, g, o);
    // the path plot: grid, ticks, labels
    const [px, py, pw, ph] = g.plot;
    ctx.font = "11px sans-serif"; ctx.fillStyle = COLORS.axis; ctx.textAlign = "center";
    for (const t of niceTicks(g.range[0], g.range[1], 5)) {
      const x = g.PX(t);
      ctx.strokeStyle = COLORS.grid; ctx.beginPath(); ctx.moveTo(x, py); ctx.lineTo(x, py + ph); ctx.stroke();
      ctx.fillText(fmt(t), x, py + ph + 14);
    }
    ctx.textAlign = "right";
    for (const t of niceTicks(g.range[2], g.range[3], 5)) {
      const y = g.PY(t);
      ctx.strokeStyle = COLORS.grid; ctx.beginPath(); ctx.moveTo(px, y); ctx.lineTo(px + pw, y); ctx.stroke();
      ctx.fillText(fmt(t), px - 4, y + 4);
    }
    ctx.strokeStyle = COLORS.axis; ctx.strokeRect(px, py, pw, ph);
    ctx.textAlign = "center"; ctx.font = "12px sans-serif";
    ctx.fillText(model.get("x_label"), px + pw / 2, py + ph + 32);
    ctx.save(); ctx.translate(px - 42, py + ph / 2); ctx.rotate(-Math.PI / 2);
    ctx.fillText(model.get("y_label"), 0, 0); ctx.restore();
    // stable solid, unstable dashed (each segment takes the stability of its far end)
    ctx.save();
    ctx.beginPath(); ctx.rect(px, py, pw, ph); ctx.clip();
    ctx.lineWidth = 2;
    for (const want of [1, 0]) {
      ctx.beginPath();
      ctx.strokeStyle = want ? COLORS.stable : COLORS.unstable;
      ctx.setLineDash(want ? [] : [6, 4]);
      for (let i = 1; i < d.cx.length; i++) {
        const st = d.stable[i] && d.stable[i - 1] ? 1 : 0;
        if (st !== want) continue;
        ctx.moveTo(g.PX(d.cx[i - 1]), g.PY(d.cy[i - 1]));
        ctx.lineTo(g.PX(d.cx[i]), g.PY(d.cy[i]));
      }
      ctx.stroke();
    }
    ctx.restore();
    ctx.font = "11px sans-serif"; ctx.textAlign = "left";
    for (const c of d.critical || []) {
      const x = g.PX(c.x), y = g.PY(c.y);
      ctx.fillStyle = COLORS.critical;
      ctx.beginPath(); ctx.moveTo(x, y - 6); ctx.lineTo(x + 6, y); ctx.lineTo(x, y + 6); ctx.lineTo(x - 6, y);
      ctx.closePath(); ctx.fill();
      ctx.fillText(`${c.kind} λ=${fmt(c.y)}`, x + 8, y - 6);
    }
    // legend
    ctx.fillStyle = COLORS.stable; ctx.fillRect(px + 8, py + 8, 14, 3);
    ctx.fillStyle = COLORS.axis; ctx.fillText("stable", px + 26, py + 13);
    ctx.fillStyle = COLORS.unstable; ctx.fillRect(px + 8, py + 22, 6, 3); ctx.fillRect(px + 16, py + 22, 6, 3);
    ctx.fillStyle = COLORS.axis; ctx.fillText("unstable", px + 26, py + 27);
  }

  function arrow(ctx, x, y, dx, dy, len) {
    // an arrow of length len (px) ending on (x, y), pointing along (dx, dy)
    const n = Math.hypot(dx, dy) || 1;
    const ux = dx / n, uy = dy / n;
    const tx = x - ux * len, ty = y - uy * len;
    ctx.beginPath(); ctx.moveTo(tx, ty); ctx.lineTo(x - ux * 7, y - uy * 7); ctx.stroke();
    ctx.beginPath(); ctx.moveTo(x, y);
    ctx.lineTo(x - ux * 9 - uy * 4, y - uy * 9 + ux * 4);
    ctx.lineTo(x - ux * 9 + uy * 4, y - uy * 9 - ux * 4);
    ctx.closePath(); ctx.fill();
  }

  function moment(ctx, x, y, sign) {
    const r = 13, a0 = -0.9 * Math.PI, a1 = 0.4 * Math.PI;
    ctx.beginPath(); ctx.arc(x, y, r, a0, a1, false); ctx.stroke();
    const a = sign > 0 ? a0 : a1;             // canvas y points down: ccw is decreasing angle
    const ex = x + r * Math.cos(a), ey = y + r * Math.sin(a);
    const tx = -Math.sin(a) * (sign > 0 ? -1 : 1), ty = Math.cos(a) * (sign > 0 ? -1 : 1);
    ctx.beginPath(); ctx.moveTo(ex + tx * 7, ey + ty * 7);
    ctx.lineTo(ex - ty * 4, ey + tx * 4); ctx.lineTo(ex + ty * 4, ey - tx * 4); ctx.closePath(); ctx.fill();
  }

  function draw() {
    pending = false;
    const t0 = performance.now();
    const g = d.g;
    const dpr = window.devicePixelRatio || 1;
    const ctx = canvas.getContext("2d");
    ctx.setTransform(1, 0, 0, 1, 0, 0);
    ctx.drawImage(layer, 0, 0);
    ctx.setTransform(dpr, 0, 0, dpr, 0, 0);
    const nf = d.nf;
    if (!nf) { readout.textContent = "(empty path)"; return; }
    const i = Math.max(0, Math.min(nf - 1, model.get("index")));
    const base = i * d.nv * 2;
    const xy = d.frames;
    ctx.save();
    ctx.beginPath(); ctx.rect(...g.shape); ctx.clip();
    // force diagram on the deformed members
    const fk = model.get("force_kind");
    const ne = d.ends.length / 2;
    if (fk && d.forces.length === nf * ne * 2) {
      const fmax = model.get("force_max") || 1;
      const s = (0.12 * g.size * g.scale) / fmax;
      ctx.fillStyle = COLORS[fk][0]; ctx.strokeStyle = COLORS[fk][1]; ctx.lineWidth = 1;
      const fb = i * ne * 2;
      ctx.beginPath();
      for (let e = 0; e < ne; e++) {
        const a = d.ends[2 * e], b = d.ends[2 * e + 1];
        const x1 = g.X(xy[base + 2 * a]), y1 = g.Y(xy[base + 2 * a + 1]);
        const x2 = g.X(xy[base + 2 * b]), y2 = g.Y(xy[base + 2 * b + 1]);
        const l = Math.hypot(x2 - x1, y2 - y1) || 1;
        const nx = -(y2 - y1) / l, ny = (x2 - x1) / l;
        const v1 = s * d.forces[fb + 2 * e], v2 = s * d.forces[fb + 2 * e + 1];
        ctx.moveTo(x1, y1); ctx.lineTo(x1 + nx * v1, y1 + ny * v1);
        ctx.lineTo(x2 + nx * v2, y2 + ny * v2); ctx.lineTo(x2, y2); ctx.closePath();
      }
      ctx.fill(); ctx.stroke();
    }
    ctx.lineWidth = 2.2; ctx.strokeStyle = COLORS.deformed; ctx.lineJoin = "round";
    const st = d.starts;
    for (let k = 0; k + 1 < st.length; k++) {
      ctx.strokeStyle = d.kinds[k] === 1 ? COLORS.bar : COLORS.deformed;
      ctx.beginPath();
      ctx.moveTo(g.X(xy[base + 2 * st[k]]), g.Y(xy[base + 2 * st[k] + 1]));
      for (let v = st[k] + 1; v < st[k + 1]; v++) ctx.lineTo(g.X(xy[base + 2 * v]), g.Y(xy[base + 2 * v + 1]));
      ctx.stroke();
    }
    // loads at the deformed nodes: reference loads turn with the sign of λ
    const lam = d.cy.length > i ? d.cy[i] : 1;
    ctx.lineWidth = 2;
    for (const f of d.symbols.loads || []) {
      const x = g.X(xy[base + 2 * f.v]), y = g.Y(xy[base + 2 * f.v + 1]);
      const sg = f.constant ? 1 : Math.sign(lam);
      ctx.strokeStyle = ctx.fillStyle = f.constant ? COLORS.constant : COLORS.load;
      if (sg !== 0 && (f.fx || f.fy)) arrow(ctx, x, y, sg * f.fx, -sg * f.fy, 44);
      if (sg !== 0 && f.mz) moment(ctx, x, y, sg * Math.sign(f.mz));
    }
    ctx.restore();
    // the marker on the path
    ctx.fillStyle = COLORS.marker; ctx.strokeStyle = "white"; ctx.lineWidth = 1.5;
    ctx.beginPath(); ctx.arc(g.PX(d.cx[i]), g.PY(d.cy[i]), 5.5, 0, 2 * Math.PI); ctx.fill(); ctx.stroke();
    // readout
    const parts = [`point ${d.points[i]} of ${d.points[nf - 1]}`];
    for (let c = 0; c < d.labels.length; c++) {
      const v = d.table[c * nf + i];
      parts.push(c === 0 ? `λ = ${fmt(v)}` : `${d.labels[c]} = ${fmt(v)}`);
    }
    parts.push(d.stable[i] ? "stable" : "unstable");
    readout.textContent = parts.join("   ");
    readout.dataset.index = String(i);
    stats.draws += 1;
    stats.drawMs += performance.now() - t0;
    stats.last = performance.now();
    canvas.dataset.draws = String((+canvas.dataset.draws || 0) + 1);
  }

  function schedule() {
    if (!pending) { pending = true; requestAnimationFrame(draw); }
  }

  function rebuild() {
    decode();
    const g = geometry();
    const dpr = window.devicePixelRatio || 1;
    canvas.width = g.W * dpr; canvas.height = g.H * dpr;
    canvas.style.width = `${g.W}px`; canvas.style.height = `${g.H}px`;
    d.g = g;
    drawLayer(g);
    schedule();
  }

  canvas.addEventListener("click", (ev) => {
    // pick the path point nearest to a click in the plot
    const r = canvas.getBoundingClientRect(), g = d.g;
    const x = ev.clientX - r.left, y = ev.clientY - r.top;
    if (x < g.plot[0]) return;
    let best = -1, bd = Infinity;
    for (let i = 0; i < d.cx.length; i++) {
      const dd = (g.PX(d.cx[i]) - x) ** 2 + (g.PY(d.cy[i]) - y) ** 2;
      if (dd < bd) { bd = dd; best = i; }
    }
    if (best >= 0) { model.set("index", best); model.save_changes(); }
  });

  const data = ["frames", "ghost", "starts", "kinds", "curve_x", "curve_y", "stable", "points",
    "table", "table_labels", "bounds", "critical", "symbols", "width", "height", "show_ghost",
    "x_label", "y_label", "n_frames", "n_vertices", "element_ends"];
  let queued = false;   // one rebuild for a batch of changes arriving together
  const onData = () => {
    if (queued) return;
    queued = true;
    queueMicrotask(() => { queued = false; rebuild(); });
  };
  for (const k of data) model.on(`change:${k}`, onData);
  const onIndex = () => { d.forces = typed(model, "forces", Float32Array); schedule(); };
  for (const k of ["index", "forces", "force_kind", "force_max"]) model.on(`change:${k}`, onIndex);
  rebuild();
  return () => {
    for (const k of data) model.off(`change:${k}`, onData);
    for (const k of ["index", "forces", "force_kind", "force_max"]) model.off(`change:${k}`, onIndex);
  };
}

export default { render };
