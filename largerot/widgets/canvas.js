// largerot path explorer: deformed shape beside the equilibrium path, on one canvas.
// Data arrive once as binary buffers; a change of `index` only redraws (one frame per
// animation frame at most). Static parts are drawn into an off-screen layer.
// Playback runs here, paced by requestAnimationFrame: each display refresh shows the
// frame due at that time (frames are skipped so a whole path takes `play_seconds`),
// and the index goes back to the kernel only a few times a second.

// Diagram signs in two colours that colour-blind readers tell apart (Okabe & Ito 2008,
// "Color Universal Design": blue and vermillion).
const POS = "#0072b2", NEG = "#d55e00";
const COLORS = {
  deformed: "#222222", bar: "#555555", ghost: "#b5b5b5", support: "#333333",
  load: "#c0392b", constant: "#7f7f7f", stable: "#1f5fa8", unstable: "#e67e22",
  critical: "#8e44ad", marker: "#c0392b", axis: "#555555", grid: "#e6e6e6",
  pos: [POS, "rgba(0,114,178,0.28)"], neg: [NEG, "rgba(213,94,0,0.28)"], hover: "#111111",
};
// Milliseconds between index updates sent to the kernel while playing.
const PLAY_SYNC_MS = 250;
// Pixels within which the pointer picks a node.
const HOVER_PX = 12;
// Offsets (px) tried in turn for a node or load label until its box overlaps none
// placed before (load arrows included): three rings of eight directions.
const LABEL_OFFSETS = [];
for (const r of [9, 18, 30]) for (const a of [45, 135, -45, -135, 90, -90, 0, 180]) {
  LABEL_OFFSETS.push([r * Math.cos((a * Math.PI) / 180), -r * Math.sin((a * Math.PI) / 180)]);
}

function typed(model, name, Kind) {
  const v = model.get(name);
  if (!v || !v.byteLength) return new Kind(0);
  const buf = v.buffer ? v.buffer : v;
  const off = v.byteOffset || 0;
  if (off % Kind.BYTES_PER_ELEMENT === 0) return new Kind(buf, off, v.byteLength / Kind.BYTES_PER_ELEMENT);
  return new Kind(buf.slice(off, off + v.byteLength));
}

// 4 significant digits, powers of ten as e5: the rule of largerot.widgets.data.format_value
function fmt(v) {
  if (!isFinite(v)) return "—";
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e-3 && a < 1e4) {
    const p = v.toPrecision(4);
    if (!p.includes("e")) return String(parseFloat(p));
  }
  let [m, e] = v.toExponential(3).split("e");
  if (m.includes(".")) m = m.replace(/0+$/, "").replace(/\.$/, "");
  return `${m}e${parseInt(e, 10)}`;
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
  readout.style.cssText = "font: 13px monospace; padding: 4px 2px; white-space: pre-wrap; max-width: 100%;";
  // the model's input the drawing gives no value for: line loads, self-weight, springs, units
  const notes = document.createElement("div");
  notes.className = "largerot-model-notes";
  notes.style.cssText = "font: 11px sans-serif; color: #666; padding: 0 2px 2px;";
  root.append(canvas, readout, notes);
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
    d.nodeU = typed(model, "node_u", Float32Array);
    d.hover = model.get("hover_nodes") || [];
    d.readouts = model.get("readouts") || [];
    d.forces = typed(model, "forces", Float32Array);
    d.ends = typed(model, "element_ends", Int32Array);
    d.nv = model.get("n_vertices");
    d.nf = model.get("n_frames");
    d.bounds = model.get("bounds");
    d.critical = model.get("critical");
    d.symbols = model.get("symbols");
    d.frameTimes = typed(model, "frame_times", Float32Array);
    d.motion = model.get("motion");
    notes.textContent = ((d.symbols || {}).notes || []).join("   ·   ");
  }

  function geometry() {
    const W = model.get("width"), H = model.get("height");
    const split = Math.round(W * 0.48);
    // a legend row above each panel, never on the drawing or the curve
    const g = { W, H, shape: [8, 26, split - 16, H - 34], plot: [split + 56, 26, W - split - 72, H - 66] };
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
    // legend: a row above the plot, off the curve
    ctx.font = "11px sans-serif"; ctx.textAlign = "left";
    let lx = px, ly = py - 10;
    if (d.motion) {
      ctx.fillStyle = COLORS.stable; ctx.fillRect(lx, ly - 4, 16, 2.5);
      ctx.fillStyle = COLORS.axis; ctx.fillText("motion (time upwards)", lx + 20, ly);
    } else {
      ctx.fillStyle = COLORS.stable; ctx.fillRect(lx, ly - 4, 16, 2.5);
      ctx.fillStyle = COLORS.axis; ctx.fillText("stable", lx + 20, ly); lx += 20 + ctx.measureText("stable").width + 14;
      ctx.fillStyle = COLORS.unstable; ctx.fillRect(lx, ly - 4, 6, 2.5); ctx.fillRect(lx + 10, ly - 4, 6, 2.5);
      ctx.fillStyle = COLORS.axis; ctx.fillText("unstable", lx + 20, ly); lx += 20 + ctx.measureText("unstable").width + 14;
    }
    if ((d.critical || []).length) {
      ctx.fillStyle = COLORS.critical;
      ctx.beginPath(); ctx.moveTo(lx + 5, ly - 8); ctx.lineTo(lx + 10, ly - 3); ctx.lineTo(lx + 5, ly + 2);
      ctx.lineTo(lx, ly - 3); ctx.closePath(); ctx.fill();
      ctx.fillStyle = COLORS.axis; ctx.fillText("critical point", lx + 14, ly);
    }
  }

  function label(ctx, text, x, y, color, align) {
    // text with a white halo, readable over lines and fills
    ctx.save();
    ctx.font = "bold 11px sans-serif"; ctx.textAlign = align; ctx.textBaseline = "middle";
    ctx.lineJoin = "round"; ctx.lineWidth = 3.5; ctx.strokeStyle = "white";
    ctx.strokeText(text, x, y);
    ctx.fillStyle = color; ctx.fillText(text, x, y);
    ctx.restore();
  }

  function placeLabels(ctx, g, items, taken) {
    // each item {text, x, y, color, bold, alpha}: the first offset whose box overlaps
    // no box placed before (extremes of the diagram included) and stays in the panel
    const [sx, sy, sw, sh] = g.shape;
    ctx.save();
    ctx.textBaseline = "middle"; ctx.lineJoin = "round";
    for (const it of items) {
      ctx.font = `${it.bold ? "bold " : ""}11px sans-serif`;
      const w = ctx.measureText(it.text).width, h = 13;
      let best = null;
      for (const [dx, dy] of LABEL_OFFSETS) {
        const align = dx > 0.5 ? "left" : dx < -0.5 ? "right" : "center";
        const x = it.x + dx, y = it.y + dy;
        const x0 = align === "left" ? x : align === "right" ? x - w : x - w / 2;
        const box = [x0 - 2, y - h / 2 - 1, x0 + w + 2, y + h / 2 + 1];
        let hits = 0;
        for (const b of taken) if (box[0] < b[2] && b[0] < box[2] && box[1] < b[3] && b[1] < box[3]) hits += 1;
        if (box[0] < sx || box[2] > sx + sw || box[1] < sy || box[3] > sy + sh) hits += 0.5;
        if (!best || hits < best.hits) best = { hits, x, y, align, box };
        if (!hits) break;
      }
      taken.push(best.box);
      ctx.globalAlpha = it.alpha;
      ctx.font = `${it.bold ? "bold " : ""}11px sans-serif`;
      ctx.textAlign = best.align;
      ctx.lineWidth = 3.5; ctx.strokeStyle = "white"; ctx.strokeText(it.text, best.x, best.y);
      ctx.fillStyle = it.color; ctx.fillText(it.text, best.x, best.y);
    }
    ctx.restore();
    canvas.dataset.labels = items.map((it) => it.text).join(" | ");
  }

  function forceDiagram(ctx, g, i, base, xy) {
    // the diagram on the deformed members, each sign in its colour, extremes written
    const ne = d.ends.length / 2, nf = d.nf;
    if (!model.get("force_kind") || d.forces.length !== nf * ne * 2) return;
    const fmax = model.get("force_max") || 1;
    const s = (0.12 * g.size * g.scale) / fmax;
    const fb = i * ne * 2;
    const pos = new Path2D(), neg = new Path2D();
    let hi = { v: 0 }, lo = { v: 0 };
    for (let e = 0; e < ne; e++) {
      const a = d.ends[2 * e], b = d.ends[2 * e + 1];
      const x1 = g.X(xy[base + 2 * a]), y1 = g.Y(xy[base + 2 * a + 1]);
      const x2 = g.X(xy[base + 2 * b]), y2 = g.Y(xy[base + 2 * b + 1]);
      const l = Math.hypot(x2 - x1, y2 - y1) || 1;
      const nx = -(y2 - y1) / l, ny = (x2 - x1) / l;
      const f1 = d.forces[fb + 2 * e], f2 = d.forces[fb + 2 * e + 1];
      const v1 = s * f1, v2 = s * f2;
      if (f1 * f2 < 0) {                 // the sign changes along the element: split at zero
        const t = f1 / (f1 - f2), xm = x1 + t * (x2 - x1), ym = y1 + t * (y2 - y1);
        const p1 = f1 > 0 ? pos : neg, p2 = f2 > 0 ? pos : neg;
        p1.moveTo(x1, y1); p1.lineTo(x1 + nx * v1, y1 + ny * v1); p1.lineTo(xm, ym); p1.closePath();
        p2.moveTo(xm, ym); p2.lineTo(x2 + nx * v2, y2 + ny * v2); p2.lineTo(x2, y2); p2.closePath();
      } else {
        const p = f1 + f2 >= 0 ? pos : neg;
        p.moveTo(x1, y1); p.lineTo(x1 + nx * v1, y1 + ny * v1);
        p.lineTo(x2 + nx * v2, y2 + ny * v2); p.lineTo(x2, y2); p.closePath();
      }
      for (const [f, v, x, y] of [[f1, v1, x1, y1], [f2, v2, x2, y2]]) {
        if (f > hi.v) hi = { v: f, x: x + nx * v, y: y + ny * v, nx: nx * Math.sign(v), ny: ny * Math.sign(v) };
        if (f < lo.v) lo = { v: f, x: x + nx * v, y: y + ny * v, nx: nx * Math.sign(v), ny: ny * Math.sign(v) };
      }
    }
    ctx.save();
    ctx.lineWidth = 1;
    ctx.fillStyle = COLORS.pos[1]; ctx.strokeStyle = COLORS.pos[0]; ctx.fill(pos); ctx.stroke(pos);
    ctx.fillStyle = COLORS.neg[1]; ctx.strokeStyle = COLORS.neg[0]; ctx.fill(neg); ctx.stroke(neg);
    ctx.restore();
    let prev = null;
    for (const [m, color] of [[hi, COLORS.pos[0]], [lo, COLORS.neg[0]]]) {
      if (!m.v) continue;
      let x = m.x + 8 * (m.nx || 0), y = m.y + 8 * (m.ny || 0);
      if (prev && Math.hypot(x - prev[0], y - prev[1]) < 14) y += 14;
      const align = (m.nx || 0) < -0.3 ? "right" : (m.nx || 0) > 0.3 ? "left" : "center";
      d.extremes.push([fmt(m.v), x, y, color, align]);
      prev = [x, y];
    }
  }

  function forceLegend(ctx, g) {
    const [name, p, n] = model.get("force_legend") || ["", "", ""];
    if (!model.get("force_kind") || !name) return;
    ctx.save();
    ctx.font = "11px sans-serif"; ctx.textAlign = "left"; ctx.textBaseline = "alphabetic";
    let x = g.shape[0], y = g.shape[1] - 10;
    ctx.fillStyle = COLORS.axis; ctx.fillText(`${name}:`, x, y); x += ctx.measureText(`${name}:`).width + 8;
    for (const [text, c] of [[p, COLORS.pos], [n, COLORS.neg]]) {
      ctx.fillStyle = c[1]; ctx.fillRect(x, y - 9, 12, 10);
      ctx.strokeStyle = c[0]; ctx.strokeRect(x, y - 9, 12, 10);
      ctx.fillStyle = COLORS.axis; ctx.fillText(text, x + 16, y); x += 16 + ctx.measureText(text).width + 12;
    }
    ctx.restore();
  }

  function hoverTip(ctx, g, i, base, xy) {
    const k = d.hovered;
    if (k === undefined || k < 0 || k >= d.hover.length) { delete canvas.dataset.hover; return; }
    const h = d.hover[k], nh = d.hover.length;
    const x = g.X(xy[base + 2 * h.v]), y = g.Y(xy[base + 2 * h.v + 1]);
    const u = d.nodeU.length === d.nf * nh * 3 ? d.nodeU.subarray((i * nh + k) * 3, (i * nh + k) * 3 + 3) : null;
    const lines = [h.label];
    if (u) for (let c = 0; c < 3; c++) lines.push(`${h.dofs[c]} = ${fmt(u[c])}`);
    canvas.dataset.hover = lines.join("  ");
    ctx.save();
    ctx.strokeStyle = COLORS.hover; ctx.lineWidth = 1.5;
    ctx.beginPath(); ctx.arc(x, y, 5, 0, 2 * Math.PI); ctx.stroke();
    ctx.font = "11px sans-serif"; ctx.textBaseline = "top"; ctx.textAlign = "left";
    const w = Math.max(...lines.map((t) => ctx.measureText(t).width)) + 10, hh = 14 * lines.length + 6;
    let bx = x + 10, by = y + 10;
    if (bx + w > g.shape[0] + g.shape[2]) bx = x - 10 - w;
    if (by + hh > g.shape[1] + g.shape[3]) by = y - 10 - hh;
    ctx.fillStyle = "rgba(255,255,255,0.92)"; ctx.strokeStyle = "#999"; ctx.lineWidth = 1;
    ctx.fillRect(bx, by, w, hh); ctx.strokeRect(bx, by, w, hh);
    ctx.fillStyle = COLORS.hover;
    lines.forEach((t, j) => { ctx.font = j ? "11px sans-serif" : "bold 11px sans-serif"; ctx.fillText(t, bx + 5, by + 4 + 14 * j); });
    ctx.restore();
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
    if (!nf) { setReadout("(empty path)"); return; }
    const i = Math.max(0, Math.min(nf - 1, shown));
    const base = i * d.nv * 2;
    const xy = d.frames;
    ctx.save();
    ctx.beginPath(); ctx.rect(...g.shape); ctx.clip();
    d.extremes = [];
    forceDiagram(ctx, g, i, base, xy);
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
    for (const [text, x, y, color, align] of d.extremes) label(ctx, text, x, y, color, align);
    canvas.dataset.extremes = d.extremes.map((e) => e[0]).join(" ");
    // the model as built: node names always (light), the loads' values at their
    // arrows' tails (full at the first frame, light after)
    const taken = [];
    ctx.save(); ctx.font = "bold 11px sans-serif";
    for (const [text, x, y, , align] of d.extremes) {
      const w = ctx.measureText(text).width;
      const x0 = align === "left" ? x : align === "right" ? x - w : x - w / 2;
      taken.push([x0, y - 7, x0 + w, y + 7]);
    }
    ctx.restore();
    const items = [];
    for (const f of d.symbols.loads || []) {
      // every arrow is kept clear, also those of line loads and self-weight (no text)
      const x = g.X(xy[base + 2 * f.v]), y = g.Y(xy[base + 2 * f.v + 1]);
      const sg = f.constant ? 1 : Math.sign(lam) || 1;
      const n = Math.hypot(f.fx, f.fy);
      const tx = n ? x - (sg * f.fx / n) * 44 : x, ty = n ? y + (sg * f.fy / n) * 44 : y - 16;
      taken.push([Math.min(x, tx) - 3, Math.min(y, ty) - 3, Math.max(x, tx) + 3, Math.max(y, ty) + 3]);
      if (!f.text) continue;
      items.push({ text: f.text, x: tx, y: ty, color: f.constant ? COLORS.constant : COLORS.load,
        bold: true, alpha: i === 0 ? 1 : 0.6 });
    }
    for (const nm of d.symbols.names || []) {
      items.push({ text: nm.text, x: g.X(xy[base + 2 * nm.v]), y: g.Y(xy[base + 2 * nm.v + 1]),
        color: "#333333", bold: nm.named, alpha: i === 0 ? 0.95 : 0.7 });
    }
    placeLabels(ctx, g, items, taken);
    hoverTip(ctx, g, i, base, xy);
    ctx.restore();
    forceLegend(ctx, g);
    // the marker on the path
    ctx.fillStyle = COLORS.marker; ctx.strokeStyle = "white"; ctx.lineWidth = 1.5;
    ctx.beginPath(); ctx.arc(g.PX(d.cx[i]), g.PY(d.cy[i]), 5.5, 0, 2 * Math.PI); ctx.fill(); ctx.stroke();
    // readout: the text of each frame comes from the kernel
    setReadout(d.readouts[i] || "");
    readout.dataset.index = String(i);
    stats.draws += 1;
    stats.drawMs += performance.now() - t0;
    stats.last = performance.now();
    canvas.dataset.draws = String((+canvas.dataset.draws || 0) + 1);
  }

  function setReadout(text) {
    // the parts of a readout line ("ux[3] = 0.5") never break inside
    if (readout.dataset.text === text) return;
    readout.dataset.text = text;
    const nodes = [];
    text.split("   ").forEach((part, k) => {
      if (k) nodes.push(document.createTextNode("   "));
      const span = document.createElement("span");
      span.style.whiteSpace = "nowrap";
      span.textContent = part;
      nodes.push(span);
    });
    readout.replaceChildren(...nodes);
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
    if (best >= 0) { stopPlay(); sync(best); schedule(); }
  });

  canvas.addEventListener("mousemove", (ev) => {
    // the node under the pointer, in the frame shown
    const r = canvas.getBoundingClientRect(), g = d.g;
    const x = ev.clientX - r.left, y = ev.clientY - r.top;
    let best = -1, bd = HOVER_PX * HOVER_PX;
    if (d.nf && x < g.shape[0] + g.shape[2]) {
      const base = Math.max(0, Math.min(d.nf - 1, shown)) * d.nv * 2;
      for (let k = 0; k < d.hover.length; k++) {
        const v = d.hover[k].v;
        const dd = (g.X(d.frames[base + 2 * v]) - x) ** 2 + (g.Y(d.frames[base + 2 * v + 1]) - y) ** 2;
        if (dd < bd) { bd = dd; best = k; }
      }
    }
    if (best !== d.hovered) { d.hovered = best; schedule(); }
  });
  // where node `n` is drawn in the frame shown, CSS pixels from the canvas corner (tests)
  canvas.largerotNodePixel = (n) => {
    const h = d.hover.find((x) => x.node === n), g = d.g;
    if (!h || !d.nf) return null;
    const base = Math.max(0, Math.min(d.nf - 1, shown)) * d.nv * 2;
    return [g.X(d.frames[base + 2 * h.v]), g.Y(d.frames[base + 2 * h.v + 1])];
  };
  canvas.addEventListener("mouseleave", () => { if (d.hovered >= 0) { d.hovered = -1; schedule(); } });

  // -- playback ------------------------------------------------------------------
  let shown = model.get("index");   // the frame drawn
  let synced = shown;               // the index last sent to the kernel
  let play = null;                  // {from, start, lastSync} while playing

  function sync(i) {
    synced = i;
    if (model.get("index") !== i) { model.set("index", i); model.save_changes(); }
    shown = i;
  }

  function tick(now) {
    if (!play) return;
    if (play.start === null) { play.start = now; play.lastSync = now; }
    const nf = d.nf;
    let i;
    const ft = d.frameTimes;
    if (ft.length === nf) {
      // a motion: the last frame due at its own (scaled) time, uneven steps kept
      const due = ft[play.from] + (now - play.start) / 1000;
      let lo = play.from, hi = nf - 1;
      while (lo < hi) { const mid = (lo + hi + 1) >> 1; if (ft[mid] <= due) lo = mid; else hi = mid - 1; }
      i = lo;
    } else {
      const rate = (nf - 1) / Math.max(0.05, model.get("play_seconds") || 8);  // frames per second
      i = Math.min(nf - 1, Math.floor(play.from + ((now - play.start) / 1000) * rate));
    }
    if (i !== shown) { shown = i; draw(); }
    if (i >= nf - 1) { stopPlay(); return; }
    if (now - play.lastSync >= PLAY_SYNC_MS) { sync(i); play.lastSync = now; }
    requestAnimationFrame(tick);
  }

  function startPlay() {
    if (play || d.nf < 2) { if (d.nf < 2) stopPlay(); return; }
    let i = Math.max(0, Math.min(d.nf - 1, model.get("index")));
    if (i >= d.nf - 1) i = 0;                   // at the end: play again from the start
    shown = i;
    play = { from: i, start: null, lastSync: 0 };
    requestAnimationFrame(tick);
  }

  function stopPlay() {
    const was = play;
    play = null;
    if (was) sync(shown);
    if (model.get("playing")) { model.set("playing", false); model.save_changes(); }
  }

  const onPlaying = () => { if (model.get("playing")) startPlay(); else if (play) stopPlay(); };
  const onStale = () => {
    const s = model.get("stale");
    root.style.opacity = s ? "0.35" : "";
    root.style.filter = s ? "grayscale(1)" : "";
    root.dataset.stale = s ? "1" : "0";
  };

  const data = ["frames", "ghost", "starts", "kinds", "curve_x", "curve_y", "stable", "points",
    "readouts", "hover_nodes", "node_u", "bounds", "critical", "symbols", "width", "height",
    "show_ghost", "x_label", "y_label", "n_frames", "n_vertices", "element_ends", "force_legend",
    "frame_times", "motion"];
  let queued = false;   // one rebuild for a batch of changes arriving together
  const onData = () => {
    if (queued) return;
    queued = true;
    queueMicrotask(() => { queued = false; rebuild(); });
  };
  for (const k of data) model.on(`change:${k}`, onData);
  const onIndex = () => {
    // a move from elsewhere (slider, kernel): while playing, play on from there
    const i = model.get("index");
    if (i === synced) return;
    synced = i; shown = i;
    if (play) { play.from = i; play.start = null; }
    schedule();
  };
  const onForces = () => { d.forces = typed(model, "forces", Float32Array); schedule(); };
  model.on("change:index", onIndex);
  for (const k of ["forces", "force_kind", "force_max"]) model.on(`change:${k}`, onForces);
  model.on("change:playing", onPlaying);
  model.on("change:stale", onStale);
  rebuild();
  onStale();
  if (model.get("playing")) startPlay();
  return () => {
    play = null;
    for (const k of data) model.off(`change:${k}`, onData);
    model.off("change:index", onIndex);
    for (const k of ["forces", "force_kind", "force_max"]) model.off(`change:${k}`, onForces);
    model.off("change:playing", onPlaying);
    model.off("change:stale", onStale);
  };
}

export default { render };
