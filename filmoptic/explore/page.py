"""One self-contained HTML page to play with a stack: sliders, colours, numbers and spectra.

The page needs no network and no server: styles, script and data are inside the file, so it works
from a USB stick or as an e-mail attachment. The data are the grids of
:func:`filmoptic.explore.grids.explore_grids`, quantised and packed as little-endian typed arrays
in base64 (Lab × 100 as int16; sRGB as bytes; luminous values and spectra × 65535 as uint16). The
script only looks values up and draws them: nothing is computed in the browser except the
absorbed part of the spectrum, A = 1 − R − T.
"""

from __future__ import annotations

import base64
import html
import json

import numpy as np

__all__ = ["explore_page", "LAB_SCALE", "FRACTION_SCALE"]

#: Lab values are stored as round(value × LAB_SCALE) in int16.
LAB_SCALE = 100
#: Fractions (luminous values, spectra) are stored as round(value × FRACTION_SCALE) in uint16.
FRACTION_SCALE = 65535


def _pack(array, dtype) -> str:
    return base64.b64encode(np.ascontiguousarray(array, dtype=np.dtype(dtype).newbyteorder("<")).tobytes()).decode()


def _fraction(values) -> str:
    return _pack(np.rint(np.clip(np.asarray(values, dtype=float), 0.0, 1.0) * FRACTION_SCALE), "u2")


def explore_page(grids, *, title: str | None = None, caution: str | None = None) -> str:
    """The HTML text of the page for an :class:`~filmoptic.explore.grids.ExploreGrids`.

    Parameters
    ----------
    grids : ExploreGrids
    title : str, optional
        Heading (default: the stack).
    caution : str, optional
        A safety note shown once at the foot of the page.

    Returns
    -------
    str

    Examples
    --------
    >>> from filmoptic.explore.grids import explore_grids
    >>> text = explore_page(explore_grids("TiO2 ? / Ti", ranges_nm=[(0, 20)], angles_deg=[0]))
    >>> text.startswith("<!DOCTYPE html>"), "http" in text.lower().replace("http-equiv", "")
    (True, False)
    """
    from filmoptic import __version__

    words = sorted({str(w) for view in grids.views.values() for w in view["word"].reshape(-1)})
    index = {w: i for i, w in enumerate(words)}
    views = []
    data = {}
    for key, view in grids.views.items():
        views.append({"key": key, "name": grids.view_names[key]})
        data[f"{key}_lab"] = _pack(np.rint(view["Lab"] * LAB_SCALE), "i2")
        data[f"{key}_rgb"] = _pack(view["rgb8"], "u1")
        data[f"{key}_gamut"] = _pack(view["in_gamut"], "u1")
        data[f"{key}_word"] = _pack(np.vectorize(index.__getitem__, otypes=[np.uint8])(view["word"]), "u1")
    luminous = [name for name, values in grids.luminous.items() if values is not None]
    for name in luminous:
        data[f"lum_{name}"] = _fraction(grids.luminous[name])
    data["curve_R"] = _fraction(grids.R)
    data["curve_T"] = _fraction(grids.T)
    meta = {
        "stack": grids.stack, "ambient": grids.ambient, "illuminant": grids.illuminant, "observer": grids.observer,
        "free": [{"name": f.name, "label": f.label, "low": float(f.values_nm[0]), "step": f.step_nm,
                  "count": int(f.values_nm.size)} for f in grids.free],
        "angles": [float(a) for a in grids.angle_deg], "wavelengths": [float(w) for w in grids.curve_wavelength_nm],
        "shape": [int(v) for v in grids.shape], "views": views, "words": words, "luminous": luminous,
        "back": grids.view_names["reflected_reverse"], "transmission": grids.transmission,
        "lab_scale": LAB_SCALE, "fraction_scale": FRACTION_SCALE, "version": __version__,
    }
    blob = json.dumps({"meta": meta, "data": data}, separators=(",", ":")).replace("</", "<\\/")
    heading = title or f"Explore {grids.stack}"
    conditions = (f"{grids.illuminant} light · {grids.observer}° observer · in {grids.ambient} · "
                  "unpolarised · luminous values per ISO 9050")
    return (_TEMPLATE
            .replace("__TITLE__", html.escape(heading))
            .replace("__CONDITIONS__", html.escape(conditions))
            .replace("__CAUTION__", html.escape(caution or ""))
            .replace("__VERSION__", html.escape(__version__))
            .replace("__DATA__", blob))


_TEMPLATE = r"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>__TITLE__</title>
<style>
  :root { --ink: #222; --soft: #666; --line: #d6d6d6; --paper: #fbfbf9; }
  body { font: 15px/1.45 system-ui, -apple-system, "Segoe UI", sans-serif; color: var(--ink);
         background: var(--paper); margin: 0; }
  main { max-width: 1060px; margin: 0 auto; padding: 18px 22px 30px; }
  h1 { font-size: 1.45em; margin: 0 0 2px; }
  .conditions { color: var(--soft); margin: 0 0 14px; font-size: 0.92em; }
  .controls { display: grid; grid-template-columns: 12em 1fr 7em; gap: 8px 14px; align-items: center;
              background: #fff; border: 1px solid var(--line); border-radius: 8px; padding: 12px 16px; }
  .controls label { font-weight: 600; }
  .controls output { font-variant-numeric: tabular-nums; text-align: right; font-weight: 600; }
  input[type=range] { width: 100%; }
  .views { display: flex; gap: 16px; margin: 16px 0; flex-wrap: wrap; }
  .card { background: #fff; border: 1px solid var(--line); border-radius: 8px; padding: 12px; flex: 1 1 220px; }
  .card h2 { font-size: 1.02em; margin: 0 0 8px; }
  .patch { height: 110px; border: 1px solid #555; border-radius: 3px; position: relative; }
  .lightbox { height: 110px; background: #fff; border: 1px solid #999; border-radius: 3px; padding: 14px;
              box-shadow: inset 0 0 18px rgba(255, 250, 225, 0.9); box-sizing: border-box; }
  .lightbox .patch { height: 100%; border-color: #bbb; border-radius: 10px; }
  .corner { position: absolute; right: 0; top: 0; width: 0; height: 0; border-left: 16px solid transparent;
            border-top: 16px solid #fff; display: none; }
  .word { font-weight: 600; margin: 8px 0 2px; }
  .numbers { font-variant-numeric: tabular-nums; color: #333; font-size: 0.93em; }
  .numbers span { display: inline-block; min-width: 5.2em; }
  .row { display: flex; gap: 16px; flex-wrap: wrap; }
  .panel { background: #fff; border: 1px solid var(--line); border-radius: 8px; padding: 12px 16px; }
  table { border-collapse: collapse; font-variant-numeric: tabular-nums; }
  td, th { padding: 3px 10px 3px 0; text-align: left; }
  td.v { text-align: right; min-width: 4.5em; }
  canvas { width: 100%; height: 300px; display: block; }
  .none { color: var(--soft); font-style: italic; }
  footer { color: var(--soft); font-size: 0.85em; margin-top: 16px; }
  .caution { color: #7a4b00; }
  .split { display: flex; height: 18px; border: 1px solid #555; margin: 12px 0 6px; }
  .split div { height: 100%; }
  .key { font-size: 0.85em; color: #444; }
  .key i { display: inline-block; width: 11px; height: 11px; border: 1px solid #777; margin: 0 4px 0 8px;
           vertical-align: -1px; }
</style>
</head>
<body>
<main>
<h1 id="title">__TITLE__</h1>
<p class="conditions">__CONDITIONS__</p>
<section class="controls" id="controls"></section>
<section class="views" id="views"></section>
<section class="row">
  <div class="panel" style="flex: 0 1 330px">
    <h2 style="font-size:1.02em;margin:0 0 6px">Where the light goes</h2>
    <table id="light"></table>
    <div class="split" id="split"></div>
    <div class="key" id="split-key"></div>
  </div>
  <div class="panel" style="flex: 1 1 480px">
    <h2 style="font-size:1.02em;margin:0 0 6px">Spectrum, film side</h2>
    <canvas id="curves" width="640" height="300" aria-label="reflectance, transmittance and absorptance against wavelength"></canvas>
  </div>
</section>
<footer>
  <p id="notes"></p>
  <p class="caution">__CAUTION__</p>
  <p>Computed by filmoptic __VERSION__ from published optical constants; every value on this page
  was computed in advance and is only looked up here. Real films differ (density, roughness,
  oxidation) and screens shift colours: compare with real parts.</p>
</footer>
</main>
<script type="application/json" id="grid-data">__DATA__</script>
<script>
"use strict";
(function () {
  const packed = JSON.parse(document.getElementById("grid-data").textContent);
  const meta = packed.meta;
  function bytes(b64) {
    const text = atob(b64), out = new Uint8Array(text.length);
    for (let i = 0; i < text.length; i++) out[i] = text.charCodeAt(i);
    return out;
  }
  const data = {};
  for (const [name, b64] of Object.entries(packed.data)) {
    const raw = bytes(b64);
    if (name.endsWith("_lab")) data[name] = new Int16Array(raw.buffer);
    else if (name.startsWith("lum_") || name.startsWith("curve_")) data[name] = new Uint16Array(raw.buffer);
    else data[name] = raw;
  }
  const [nA, n1, n2] = meta.shape;
  const W = meta.wavelengths.length;
  const F = meta.fraction_scale, LS = meta.lab_scale;

  // Controls: one slider per free thickness, one for the angle.
  const controls = document.getElementById("controls");
  const sliders = [];
  function slider(id, label, min, max, step, unit) {
    const lab = document.createElement("label");
    lab.htmlFor = id; lab.textContent = label;
    const input = document.createElement("input");
    Object.assign(input, {type: "range", id: id, min: String(min), max: String(max), step: String(step)});
    input.value = String(min);
    const out = document.createElement("output");
    out.id = id + "-value"; out.htmlFor = id;
    controls.append(lab, input, out);
    input.addEventListener("input", update);
    sliders.push({input, out, min, step, unit});
    return input;
  }
  meta.free.forEach((f, k) => {
    const top = f.low + f.step * (f.count - 1);
    slider("d" + k, f.label + " thickness", f.low, +top.toFixed(6), f.step || 1, "nm");
  });
  const angles = meta.angles;
  const angleStep = angles.length > 1 ? angles[1] - angles[0] : 1;
  const evenAngles = angles.every((a, i) => Math.abs(a - (angles[0] + i * angleStep)) < 1e-9);
  if (evenAngles) slider("angle", "viewing angle", angles[0], angles[angles.length - 1], angleStep, "°");
  else slider("angle", "viewing angle", 0, angles.length - 1, 1, "°");

  // Cards: one per view; the view through the part is drawn on a light box.
  const viewsBox = document.getElementById("views");
  const cards = {};
  for (const v of meta.views) {
    const card = document.createElement("div");
    card.className = "card"; card.id = "view-" + v.key;
    const h = document.createElement("h2");
    h.textContent = v.name.charAt(0).toUpperCase() + v.name.slice(1);
    const patch = document.createElement("div");
    patch.className = "patch"; patch.id = v.key + "-patch";
    const corner = document.createElement("div");
    corner.className = "corner"; patch.append(corner);
    let holder = patch;
    if (v.key === "transmitted") {
      holder = document.createElement("div"); holder.className = "lightbox"; holder.append(patch);
    }
    const word = document.createElement("div");
    word.className = "word"; word.id = v.key + "-word";
    const nums = document.createElement("div");
    nums.className = "numbers";
    const parts = {};
    for (const [k, t] of [["L", "L*"], ["a", "a*"], ["b", "b*"], ["hex", "sRGB"]]) {
      const span = document.createElement("span");
      const value = document.createElement("b");
      value.id = v.key + "-" + k;
      span.append(t + " ", value);
      nums.append(span, " ");
      parts[k] = value;
    }
    card.append(h, holder, word, nums);
    viewsBox.append(card);
    cards[v.key] = {patch, corner, word, parts};
  }
  if (!meta.views.some(v => v.key === "transmitted")) {
    const card = document.createElement("div");
    card.className = "card none"; card.id = "view-transmitted";
    card.textContent = "Nothing comes through this part: the substrate absorbs all the light that enters it.";
    viewsBox.append(card);
  }

  // Luminous values.
  const rows = [["T", "Tv, through"], ["R", "Rv, film side"], ["R_reverse", "Rv, " + meta.back],
                ["A_layers", "absorbed in the film"], ["A_substrate", "absorbed in the substrate"]];
  const light = document.getElementById("light");
  const cells = {};
  for (const [key, label] of rows) {
    if (!meta.luminous.includes(key)) continue;
    if (key === "T" && !meta.views.some(v => v.key === "transmitted")) continue;
    const tr = document.createElement("tr");
    const th = document.createElement("th"); th.textContent = label;
    const td = document.createElement("td"); td.className = "v"; td.id = "lum-" + key;
    const unit = document.createElement("td"); unit.textContent = "%";
    tr.append(th, td, unit); light.append(tr);
    cells[key] = td;
  }

  // The same light as one bar: reflected, through, absorbed in the film and in the substrate.
  const parts = [["R", "#8aa1b8", "reflected"], ["T", "#f2df8c", "through"],
                 ["A_layers", "#8c6d46", "film"], ["A_substrate", "#5d5d5d", "substrate"]];
  const bar = document.getElementById("split"), key = document.getElementById("split-key");
  const segments = {};
  const through = meta.views.some(v => v.key === "transmitted");
  for (const [name, colour, label] of parts) {
    if (!meta.luminous.includes(name) || (name === "T" && !through)) continue;
    const seg = document.createElement("div");
    seg.style.background = colour; bar.append(seg); segments[name] = seg;
    const swatch = document.createElement("i"); swatch.style.background = colour;
    key.append(swatch, label);
  }

  function position() {
    const idx = sliders.map(s => Math.round((parseFloat(s.input.value) - s.min) / s.step));
    const a = evenAngles ? idx[idx.length - 1] : parseInt(sliders[sliders.length - 1].input.value, 10);
    const i = Math.max(0, Math.min(n1 - 1, idx[0]));
    const j = meta.free.length > 1 ? Math.max(0, Math.min(n2 - 1, idx[1])) : 0;
    return {a: Math.max(0, Math.min(nA - 1, a)), i, j, point: (Math.max(0, Math.min(nA - 1, a)) * n1 + i) * n2 + j};
  }
  function signed(x) { return (x >= 0 ? "+" : "−") + Math.abs(x).toFixed(1); }
  function hex(r, g, b) { return "#" + [r, g, b].map(x => x.toString(16).padStart(2, "0")).join(""); }

  function update() {
    const p = position();
    meta.free.forEach((f, k) => {
      const value = f.low + f.step * (k === 0 ? p.i : p.j);
      sliders[k].out.textContent = (+value.toFixed(3)) + " nm";
    });
    sliders[sliders.length - 1].out.textContent = angles[p.a] + "°";
    for (const v of meta.views) {
      const c = cards[v.key], lab = data[v.key + "_lab"], rgb = data[v.key + "_rgb"];
      const L = lab[3 * p.point] / LS, A = lab[3 * p.point + 1] / LS, B = lab[3 * p.point + 2] / LS;
      const colour = hex(rgb[3 * p.point], rgb[3 * p.point + 1], rgb[3 * p.point + 2]);
      c.patch.style.background = colour;
      c.corner.style.display = data[v.key + "_gamut"][p.point] ? "none" : "block";
      c.word.textContent = meta.words[data[v.key + "_word"][p.point]];
      c.parts.L.textContent = L.toFixed(1);
      c.parts.a.textContent = signed(A);
      c.parts.b.textContent = signed(B);
      c.parts.hex.textContent = colour + (data[v.key + "_gamut"][p.point] ? "" : " (outside sRGB)");
    }
    for (const [key, td] of Object.entries(cells)) {
      td.textContent = (100 * data["lum_" + key][p.point] / F).toFixed(2);
    }
    for (const [name, seg] of Object.entries(segments)) {
      seg.style.width = (100 * data["lum_" + name][p.point] / F) + "%";
    }
    draw(p.point);
  }

  const canvas = document.getElementById("curves");
  function draw(point) {
    const ratio = window.devicePixelRatio || 1;
    const width = canvas.clientWidth || 640, height = canvas.clientHeight || 300;
    canvas.width = Math.round(width * ratio); canvas.height = Math.round(height * ratio);
    const g = canvas.getContext("2d");
    g.setTransform(ratio, 0, 0, ratio, 0, 0);
    g.clearRect(0, 0, width, height);
    const left = 58, right = 12, top = 26, bottom = 42;
    const w0 = meta.wavelengths[0], w1 = meta.wavelengths[W - 1];
    const x = w => left + (w - w0) / (w1 - w0) * (width - left - right);
    const y = v => top + (1 - v) * (height - top - bottom);
    g.font = "12px system-ui, sans-serif"; g.fillStyle = "#444"; g.strokeStyle = "#e3e3e3"; g.lineWidth = 1;
    g.textAlign = "right"; g.textBaseline = "middle";
    for (let v = 0; v <= 100; v += 20) {
      g.beginPath(); g.moveTo(left, y(v / 100)); g.lineTo(width - right, y(v / 100)); g.stroke();
      g.fillText(String(v), left - 6, y(v / 100));
    }
    g.textAlign = "center"; g.textBaseline = "top";
    for (let w = Math.ceil(w0 / 50) * 50; w <= w1; w += 50) {
      g.beginPath(); g.moveTo(x(w), top); g.lineTo(x(w), height - bottom); g.stroke();
      if (w % 100 === 0) g.fillText(String(w), x(w), height - bottom + 5);
    }
    g.fillText("wavelength (nm)", left + (width - left - right) / 2, height - 18);
    g.save(); g.translate(14, top + (height - top - bottom) / 2); g.rotate(-Math.PI / 2);
    g.textBaseline = "middle"; g.fillText("share of the incident light (%)", 0, 0); g.restore();
    const R = data.curve_R, T = data.curve_T, base = point * W;
    const series = [["R", "#b03a2e", [], k => R[base + k] / F]];
    if (meta.views.some(v => v.key === "transmitted")) series.push(["T", "#1f5fa8", [6, 4], k => T[base + k] / F]);
    series.push(["A, absorbed", "#8c6d1f", [2, 3], k => Math.max(0, 1 - R[base + k] / F - T[base + k] / F)]);
    series.forEach(([name, colour, dash, value], s) => {
      g.strokeStyle = colour; g.lineWidth = 2; g.setLineDash(dash); g.beginPath();
      for (let k = 0; k < W; k++) {
        const px = x(meta.wavelengths[k]), py = y(value(k));
        if (k === 0) g.moveTo(px, py); else g.lineTo(px, py);
      }
      g.stroke(); g.setLineDash([]);
      g.fillStyle = colour; g.textAlign = "left"; g.textBaseline = "middle";
      g.fillRect(left + 10 + s * 80, 9, 18, 3);
      g.fillText(name, left + 32 + s * 80, 10);
    });
  }

  const notes = ["Move a slider to change a thickness or the viewing angle; the values are those at the nearest grid point."];
  meta.free.forEach(f => notes.push(f.label + ": " + f.low + "–" + (+(f.low + f.step * (f.count - 1)).toFixed(3)) +
                                     " nm every " + f.step + " nm."));
  const words = ["Film side: the coated face"];
  if (meta.views.some(v => v.key === "reflected_reverse")) words.push(meta.back + ": the part turned over");
  if (meta.views.some(v => v.key === "transmitted")) words.push("through: the colour of a light box seen through the part");
  notes.push("Angles: " + angles.join(", ") + "°. " + words.join("; ") + ".");
  document.getElementById("notes").textContent = notes.join(" ");
  window.addEventListener("resize", update);
  update();
  document.body.dataset.ready = "1";
})();
</script>
</body>
</html>
"""
