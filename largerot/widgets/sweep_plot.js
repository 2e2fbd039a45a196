// largerot sweep plot: a summary column against a parameter, one curve per value of a
// second parameter, drawn as SVG from the table's numbers. Hovering a point shows its
// case; clicking it sends {event: "click", case} to Python, which opens the case.

const NS = "http://www.w3.org/2000/svg";
const PALETTE = ["#1f5fa8", "#c0392b", "#2e8b57", "#8e44ad", "#e67e22", "#16a085", "#7f7f7f", "#b8860b"];
const PAD = { left: 64, right: 150, top: 14, bottom: 44 };

function fmt(v) {
  if (!isFinite(v)) return "—";
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(2);
  return String(parseFloat(v.toPrecision(4)));
}

function niceTicks(lo, hi, n) {
  const span = hi - lo || 1;
  const raw = span / n, p = Math.pow(10, Math.floor(Math.log10(raw)));
  const step = [1, 2, 5, 10].map((m) => m * p).find((s) => s >= raw) || raw;
  const out = [];
  for (let t = Math.ceil(lo / step) * step, k = 0; t <= hi + 1e-9 * span && k < 50; t += step, k++) out.push(t);
  return out;
}

// null (NaN or no number in Python) is not drawn; isFinite(null) would say true
const drawable = (p) => typeof p[1] === "number" && typeof p[2] === "number" && isFinite(p[1]) && isFinite(p[2]);

function node(tag, attrs, parent) {
  const e = document.createElementNS(NS, tag);
  for (const [k, v] of Object.entries(attrs || {})) e.setAttribute(k, v);
  if (parent) parent.append(e);
  return e;
}

function render({ model, el }) {
  const root = document.createElement("div");
  root.className = "largerot-sweep";
  root.style.cssText = "position: relative; font-family: sans-serif; font-size: 12px;";
  const tip = document.createElement("div");
  tip.className = "largerot-sweep-tip";
  tip.style.cssText = "position: absolute; display: none; pointer-events: none; background: #fff;"
    + " border: 1px solid #999; padding: 3px 6px; font: 12px monospace; white-space: pre;"
    + " box-shadow: 1px 1px 3px rgba(0,0,0,0.2); z-index: 10;";
  el.append(root);

  function draw() {
    const W = model.get("width"), H = model.get("height");
    const series = model.get("series") || [];
    const chosen = model.get("chosen");
    const pts = series.flatMap((s) => s.points).filter(drawable);
    root.replaceChildren();
    const svg = node("svg", { width: W, height: H, viewBox: `0 0 ${W} ${H}`, class: "largerot-sweep-svg" }, root);
    root.append(tip);
    if (!pts.length) {
      node("text", { x: W / 2, y: H / 2, "text-anchor": "middle", fill: "#555" }, svg).textContent = "no finite values to plot";
      return;
    }
    let [x0, x1] = [Math.min(...pts.map((p) => p[1])), Math.max(...pts.map((p) => p[1]))];
    let [y0, y1] = [Math.min(...pts.map((p) => p[2])), Math.max(...pts.map((p) => p[2]))];
    const mx = (x1 - x0 || Math.abs(x0) || 1) * 0.05, my = (y1 - y0 || Math.abs(y0) || 1) * 0.08;
    x0 -= mx; x1 += mx; y0 -= my; y1 += my;
    const pw = W - PAD.left - PAD.right, ph = H - PAD.top - PAD.bottom;
    const sx = (x) => PAD.left + ((x - x0) / (x1 - x0)) * pw;
    const sy = (y) => PAD.top + (1 - (y - y0) / (y1 - y0)) * ph;
    const axes = node("g", { class: "largerot-sweep-axes", fill: "#555", stroke: "none" }, svg);
    for (const t of niceTicks(x0, x1, 6)) {
      node("line", { x1: sx(t), x2: sx(t), y1: PAD.top, y2: PAD.top + ph, stroke: "#e6e6e6" }, axes);
      node("text", { x: sx(t), y: PAD.top + ph + 14, "text-anchor": "middle" }, axes).textContent = fmt(t);
    }
    for (const t of niceTicks(y0, y1, 5)) {
      node("line", { x1: PAD.left, x2: PAD.left + pw, y1: sy(t), y2: sy(t), stroke: "#e6e6e6" }, axes);
      node("text", { x: PAD.left - 6, y: sy(t) + 4, "text-anchor": "end" }, axes).textContent = fmt(t);
    }
    node("rect", { x: PAD.left, y: PAD.top, width: pw, height: ph, fill: "none", stroke: "#555" }, axes);
    node("text", { x: PAD.left + pw / 2, y: H - 8, "text-anchor": "middle" }, axes).textContent = model.get("x_label");
    node("text", { x: 14, y: PAD.top + ph / 2, "text-anchor": "middle",
                   transform: `rotate(-90 14 ${PAD.top + ph / 2})` }, axes).textContent = model.get("y_label");

    series.forEach((s, k) => {
      const color = PALETTE[k % PALETTE.length];
      const good = s.points.filter(drawable);
      node("polyline", { points: good.map((p) => `${sx(p[1])},${sy(p[2])}`).join(" "), fill: "none",
                         stroke: color, "stroke-width": 1.5 }, svg);
      if (s.label) {
        const ly = PAD.top + 10 + 16 * k;
        node("line", { x1: PAD.left + pw + 10, x2: PAD.left + pw + 30, y1: ly, y2: ly, stroke: color, "stroke-width": 2 }, svg);
        node("text", { x: PAD.left + pw + 35, y: ly + 4, fill: "#333" }, svg).textContent = s.label;
      }
      for (const p of good) {
        const c = node("circle", { cx: sx(p[1]), cy: sy(p[2]), r: 4, fill: color, stroke: "#fff",
                                   "stroke-width": 1, class: "largerot-sweep-point", "data-case": p[0] }, svg);
        c.style.cursor = "pointer";
        node("title", {}, c).textContent = p[3];
        c.addEventListener("mouseenter", () => {
          c.setAttribute("r", 6);
          tip.textContent = p[3] + "\n(click to open)";
          tip.style.display = "block";
          tip.style.left = `${sx(p[1]) + 10}px`;
          tip.style.top = `${sy(p[2]) + 10}px`;
        });
        c.addEventListener("mouseleave", () => { c.setAttribute("r", 4); tip.style.display = "none"; });
        c.addEventListener("click", () => model.send({ event: "click", case: p[0] }));
      }
    });
    const mark = pts.find((p) => p[0] === chosen);
    if (mark) {
      node("rect", { x: sx(mark[1]) - 8, y: sy(mark[2]) - 8, width: 16, height: 16, fill: "none",
                     stroke: "#000", "stroke-width": 1.5, class: "largerot-sweep-chosen",
                     "pointer-events": "none" }, svg);
    }
  }

  draw();
  for (const name of ["series", "chosen", "x_label", "y_label", "width", "height"]) model.on(`change:${name}`, draw);
}

export default { render };
