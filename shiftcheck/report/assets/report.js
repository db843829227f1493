/* shiftcheck report page. Plain JavaScript written for shiftcheck (no third-party code).
   Reads the JSON block embedded in the page and draws tables and inline SVG; fetches nothing. */
"use strict";
(function () {
  const D = JSON.parse(document.getElementById("shiftcheck-data").textContent);
  const S = D.style, R = D.residues, RK = D.ranking, M = D.meta;
  const $ = (id) => document.getElementById(id);
  const ok = (x) => x !== null && x !== undefined && isFinite(x);
  const fix = (x, d) => (ok(x) ? Number(x).toFixed(d) : "-");
  const sgn = (x, d) => (ok(x) ? (x >= 0 ? "+" : "") + Number(x).toFixed(d) : "-");
  const ESC = { "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;", "'": "&#39;" };
  const esc = (t) => String(t === null || t === undefined ? "" : t).replace(/[&<>"']/g, (c) => ESC[c]);
  const colour = (x) => S.nucleus_colours[x] || S.neutral;
  const iso = (x) => S.isotope_label[S.offset_type[x]] || "";
  function shade(t) {            // 0..1 on the sequential scale (palest tint cut off, as in the PDF)
    const n = S.sequential.length;
    return S.sequential[Math.max(0, Math.min(n - 1, Math.round(t * (n - 1))))];
  }
  function dark(hex) {
    const v = parseInt(hex.slice(1), 16);
    return 0.299 * (v >> 16) + 0.587 * ((v >> 8) & 255) + 0.114 * (v & 255) < 140;
  }
  function el(tag, attrs, text) {
    const e = document.createElement(tag);
    for (const k in attrs || {}) e.setAttribute(k, attrs[k]);
    if (text !== undefined) e.textContent = text;
    return e;
  }
  const tipAttr = (lines) => ` data-tip="${esc(lines.join("\n"))}"`;
  /* ---------------------------------------------------------------- hover tips */
  const tip = $("tip");
  document.addEventListener("mousemove", (ev) => {
    const t = ev.target.closest ? ev.target.closest("[data-tip]") : null;
    if (!t) { tip.style.display = "none"; return; }
    tip.textContent = t.getAttribute("data-tip");
    tip.style.display = "block";
    const w = tip.offsetWidth, h = tip.offsetHeight;
    tip.style.left = Math.min(ev.clientX + 14, window.innerWidth - w - 4) + "px";
    tip.style.top = Math.min(ev.clientY + 14, window.innerHeight - h - 4) + "px";
  });

  /* ---------------------------------------------------------------- rows per model */
  const col = (name, i) => R.codes[name] ? R.codes[name][R[name][i]] : R[name][i];
  const rowsOf = {};
  for (let i = 0; i < R.n; i++) (rowsOf[col("model", i)] = rowsOf[col("model", i)] || []).push(i);
  const flagClass = (f) => (!f ? "" : f.indexOf("every") >= 0 ? "every" : "some");
  const FLAG_TEXT = { "": "not flagged", every: "flagged in every model (data or predictor?)",
                      some: "flagged in some models (these models?)" };
  let picked = D.points_models.indexOf(M.best_model) >= 0 ? M.best_model : D.points_models[0];

  /* ---------------------------------------------------------------- header */
  $("title").textContent = M.title;
  $("meta").textContent = `shiftcheck ${M.version}, created ${M.created}. Output directory: ${M.outdir}. ` +
    `Best model: ${M.best_model}. ${RK.model.length} model(s) ranked.`;
  $("caution-top").textContent = M.caution;
  $("caution-end").textContent = M.caution;
  for (const g of M.guide) $("guide").appendChild(el("li", {}, g));
  for (const s of D.summarised) $("summarised").appendChild(el("p", { class: "note" }, "Summarised: " + s));

  /* ---------------------------------------------------------------- ranking table */
  const PAGE = 100;
  const nucs = RK.nuclei.filter((x) => RK.metrics.rmsd[x].some(ok));
  const order0 = RK.model.map((_, i) => i);
  let sortKey = "score", sortDir = 1, page = 0;
  const lo = Math.min(...RK.score_low.filter(ok), ...RK.score.filter(ok));
  const hi = Math.max(...RK.score_high.filter(ok), ...RK.score.filter(ok));
  function keyOf(i, k) {
    if (k === "model") return RK.model[i];
    if (k === "best_group") return RK.best_group[i] ? 0 : 1;
    if (k.startsWith("rmsd_")) return RK.metrics.rmsd[k.slice(5)][i];
    return RK[k][i];
  }
  function sorted() {
    return order0.slice().sort((a, b) => {
      let x = keyOf(a, sortKey), y = keyOf(b, sortKey);
      if (typeof x === "string") return sortDir * x.localeCompare(y);
      x = ok(x) ? x : Infinity; y = ok(y) ? y : Infinity;
      return x === y ? RK.rank[a] - RK.rank[b] : sortDir * (x - y);
    });
  }
  function intervalSvg(i) {
    const W = 120, sx = (v) => 4 + (W - 8) * (hi > lo ? (v - lo) / (hi - lo) : 0.5);
    const s = RK.score[i], a = RK.score_low[i], b = RK.score_high[i];
    const fill = RK.best_group[i] ? S.best_group : "#ffffff";
    return `<svg width="${W}" height="12">` +
      (ok(a) && ok(b) ? `<line x1="${sx(a)}" x2="${sx(b)}" y1="6" y2="6" stroke="${S.neutral}" stroke-width="1.5"/>` : "") +
      (ok(s) ? `<circle cx="${sx(s)}" cy="6" r="4" fill="${fill}" stroke="${S.best_group}"/>` : "") + "</svg>";
  }
  function drawRanking() {
    const cols = [["rank", "rank"], ["model", "model"], ["score", "score"], ["score_low", "95 % interval"],
                  ["p_best", "P(best)"], ["best_group", "best group"]].concat(nucs.map((x) => ["rmsd_" + x, x]));
    const rows = sorted(), n = rows.length, pages = Math.ceil(n / PAGE);
    page = Math.min(page, pages - 1);
    const head = cols.map(([k, label]) => {
      const arrow = k === sortKey ? (sortDir > 0 ? " \u25B2" : " \u25BC") : "";
      const sw = k.startsWith("rmsd_") ? `<span class="sw" style="background:${colour(label)}"></span><br>` : "";
      const cls = k === "model" ? ' class="txt"' : "";
      const title = k.startsWith("rmsd_") ? ` title="RMSD (ppm) of ${esc(label)} (${iso(label)})"` : "";
      return `<th data-k="${k}"${cls}${title}>${sw}${esc(label)}${arrow}</th>`;
    }).join("");
    const body = rows.slice(page * PAGE, page * PAGE + PAGE).map((i) => {
      const m = RK.model[i];
      const cells = [`<td>${fix(RK.rank[i], 0)}</td>`, `<td class="txt">${esc(m)}</td>`,
        `<td>${fix(RK.score[i], 3)}</td>`,
        `<td${tipAttr([`${m}`, `score ${fix(RK.score[i], 3)}`, `95 % interval ${fix(RK.score_low[i], 3)} to ${fix(RK.score_high[i], 3)}`])}>` +
          `${fix(RK.score_low[i], 3)}-${fix(RK.score_high[i], 3)} ${intervalSvg(i)}</td>`,
        `<td>${fix(RK.p_best[i], 3)}</td>`, `<td>${RK.best_group[i] ? "\u25CF yes" : "\u25CB"}</td>`];
      for (const x of nucs) {
        const v = RK.metrics.rmsd[x][i], e = M.expected_error[x];
        let bg = "", fg = "";
        if (ok(v) && ok(e) && e > 0) {
          const c = shade(Math.min(1, Math.max(0, v / e / 3)) * 0.85);
          bg = `background:${c};`; fg = dark(c) ? "color:#fff;" : "";
        }
        cells.push(`<td style="${bg}${fg}"${tipAttr([`${m}  ${x} (${iso(x)})`, `RMSD ${fix(v, 3)} ppm`,
          `MAD ${fix(RK.metrics.mad[x][i], 3)} ppm`, `r ${fix(RK.metrics.r[x][i], 3)}`,
          `N ${fix(RK.metrics.n[x][i], 0)}`, `expected error ${fix(e, 3)} ppm`])}>${fix(v, 2)}</td>`);
      }
      const cls = (m === picked ? "picked " : "") + (RK.best_group[i] ? "best" : "");
      return `<tr data-model="${esc(m)}" class="${cls}">${cells.join("")}</tr>`;
    }).join("");
    $("ranking-table").innerHTML = `<thead><tr>${head}</tr></thead><tbody>${body}</tbody>`;
    const pager = $("ranking-pager");
    pager.innerHTML = pages > 1 ? `<button id="pg-prev">previous</button> rows ${page * PAGE + 1}-` +
      `${Math.min(n, page * PAGE + PAGE)} of ${n} <button id="pg-next">next</button>` : `${n} model(s)`;
    if (pages > 1) {
      $("pg-prev").onclick = () => { page = Math.max(0, page - 1); drawRanking(); };
      $("pg-next").onclick = () => { page = Math.min(pages - 1, page + 1); drawRanking(); };
    }
  }
  $("ranking-table").addEventListener("click", (ev) => {
    const th = ev.target.closest("th");
    if (th) {
      const k = th.getAttribute("data-k");
      sortDir = k === sortKey ? -sortDir : 1; sortKey = k; page = 0; drawRanking(); return;
    }
    const tr = ev.target.closest("tr[data-model]");
    if (tr && D.points_models.indexOf(tr.getAttribute("data-model")) >= 0) pick(tr.getAttribute("data-model"));
  });

  /* ---------------------------------------------------------------- small SVG helpers */
  function ticks(a, b, n) {
    const span = b - a, step0 = Math.pow(10, Math.floor(Math.log10(span / n)));
    const step = [1, 2, 5, 10].map((f) => f * step0).find((s) => span / s <= n) || step0 * 10;
    const out = [];
    for (let v = Math.ceil(a / step) * step; v <= b + 1e-9; v += step) out.push(+v.toFixed(10));
    return out;
  }
  const tfmt = (v) => (Math.abs(v) >= 100 || Number.isInteger(v) ? String(Math.round(v * 100) / 100) : v.toFixed(1));
  function axes(W, H, m, xa, xb, ya, yb, xlabel, ylabel) {
    const sx = (v) => m.l + (W - m.l - m.r) * (v - xa) / (xb - xa);
    const sy = (v) => H - m.b - (H - m.t - m.b) * (v - ya) / (yb - ya);
    let s = `<line x1="${m.l}" y1="${H - m.b}" x2="${W - m.r}" y2="${H - m.b}" stroke="#000"/>` +
            (ylabel === null ? "" : `<line x1="${m.l}" y1="${m.t}" x2="${m.l}" y2="${H - m.b}" stroke="#000"/>`);
    for (const v of ticks(xa, xb, 5)) s += `<line x1="${sx(v)}" x2="${sx(v)}" y1="${H - m.b}" y2="${H - m.b + 4}" stroke="#000"/>` +
      `<text x="${sx(v)}" y="${H - m.b + 15}" font-size="10" text-anchor="middle">${tfmt(v)}</text>`;
    if (ylabel !== null) for (const v of ticks(ya, yb, 5)) s += `<line x1="${m.l - 4}" x2="${m.l}" y1="${sy(v)}" y2="${sy(v)}" stroke="#000"/>` +
      `<text x="${m.l - 6}" y="${sy(v) + 3}" font-size="10" text-anchor="end">${tfmt(v)}</text>`;
    if (xlabel) s += `<text x="${(m.l + W - m.r) / 2}" y="${H - 4}" font-size="11" text-anchor="middle">${esc(xlabel)}</text>`;
    if (ylabel) s += `<text transform="translate(12 ${(m.t + H - m.b) / 2}) rotate(-90)" font-size="11" text-anchor="middle">${esc(ylabel)}</text>`;
    return { sx, sy, svg: s };
  }

  /* ---------------------------------------------------------------- correlation panels */
  function pointTip(i, model) {
    const off = R.offset[i];
    return [`${model}`, `${col("comp_id", i)} ${R.seq_id[i]} ${col("atom_id", i)}  (chain ${col("chain", i)}, class ${col("nucleus", i)})`,
      `measured  ${fix(R.measured[i], 3)} ppm` + (ok(off) && off !== 0 ? `  (offset ${sgn(off, 3)}, as compared ${fix(R.measured[i] - off, 3)})` : ""),
      `predicted ${fix(R.predicted[i], 3)} ppm`, `residual  ${sgn(R.residual[i], 3)} ppm`, `z         ${sgn(R.z[i], 2)}`,
      `flag      ${FLAG_TEXT[flagClass(col("flag", i))]}`];
  }
  function corrPanel(x, rows, model) {
    const W = 270, H = 270, m = { l: 46, r: 10, t: 40, b: 36 };
    const meas = rows.map((i) => R.measured[i] - (ok(R.offset[i]) ? R.offset[i] : 0));
    const pred = rows.map((i) => R.predicted[i]);
    const reref = rows.some((i) => ok(R.offset[i]) && R.offset[i] !== 0);
    let a = Math.min(...meas, ...pred), b = Math.max(...meas, ...pred);
    const pad = 0.06 * Math.max(b - a, 0.5); a -= pad; b += pad;
    const ax = axes(W, H, m, a, b, a, b, "predicted (ppm)", reref ? "measured - offset (ppm)" : "measured (ppm)");
    let s = ax.svg + `<line x1="${ax.sx(a)}" y1="${ax.sy(a)}" x2="${ax.sx(b)}" y2="${ax.sy(b)}" stroke="#000" stroke-width="0.8"/>`;
    const c = colour(x), late = [];
    rows.forEach((i, k) => {
      const px = ax.sx(pred[k]).toFixed(1), py = ax.sy(meas[k]).toFixed(1), f = flagClass(col("flag", i));
      const t = tipAttr(pointTip(i, model));
      if (!f) s += `<circle class="pt" cx="${px}" cy="${py}" r="2.6" fill="${c}" fill-opacity="0.8"${t}/>`;
      else if (f === "every") late.push(`<rect class="pt flagged" x="${px - 4}" y="${py - 4}" width="8" height="8" fill="${c}" stroke="${S.emphasis}" stroke-width="1.2"${t}/>`);
      else late.push(`<path class="pt flagged" d="M${px} ${py - 5}L${+px + 5} ${+py + 4}L${px - 5} ${+py + 4}Z" fill="${c}" stroke="${S.emphasis}" stroke-width="1.2"${t}/>`);
    });
    s += late.join("");
    const j = RK.model.indexOf(model);
    let rmsd = j >= 0 && RK.metrics.rmsd[x] ? RK.metrics.rmsd[x][j] : null;
    let r = j >= 0 && RK.metrics.r[x] ? RK.metrics.r[x][j] : null;
    if (!ok(rmsd)) rmsd = Math.sqrt(rows.reduce((t, i) => t + R.residual[i] * R.residual[i], 0) / rows.length);
    s += `<text x="${m.l}" y="16" font-size="13" font-weight="bold">${esc(x)} (${iso(x)})</text>` +
         `<rect x="${m.l - 14}" y="6" width="10" height="10" fill="${c}"/>` +
         `<text x="${m.l}" y="31" font-size="10.5">RMSD ${fix(rmsd, 2)} ppm  r ${fix(r, 3)}  N ${rows.length}</text>`;
    return `<svg class="corr" data-nucleus="${esc(x)}" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}">${s}</svg>`;
  }
  function drawCorr() {
    const rows = (rowsOf[picked] || []).filter((i) => ok(R.measured[i]) && ok(R.predicted[i]));
    const by = {};
    for (const i of rows) (by[col("nucleus", i)] = by[col("nucleus", i)] || []).push(i);
    const classes = S.nucleus_order.filter((x) => by[x]);
    $("corr-panels").innerHTML = classes.length ? classes.map((x) => corrPanel(x, by[x], picked)).join("")
      : `<p>No compared atoms for ${esc(picked)} in residues.csv.</p>`;
    $("corr-panels").setAttribute("data-model", picked);
    $("model-note").textContent = picked === M.best_model ? "(best model)" : "";
  }
  const mk = (shape, c) => `<svg width="14" height="14">${shape === "o" ? `<circle cx="7" cy="7" r="3.5" fill="${c}"/>`
    : shape === "s" ? `<rect x="2" y="2" width="10" height="10" fill="${c}" stroke="#000" stroke-width="1.2"/>`
    : `<path d="M7 1L13 12L1 12Z" fill="${c}" stroke="#000" stroke-width="1.2"/>`}</svg>`;
  $("corr-legend").innerHTML = `${mk("o", S.neutral_light)} compared atom &nbsp; ${mk("s", S.neutral_light)} flagged in every model (data or predictor?) &nbsp; ` +
    `${mk("t", S.neutral_light)} flagged in some models (these models?) &nbsp; <svg width="22" height="10"><line x1="0" y1="9" x2="22" y2="1" stroke="#000"/></svg> measured = predicted`;

  const pickSel = $("model-pick");
  for (const m of D.points_models) pickSel.appendChild(el("option", { value: m }, m + (m === M.best_model ? "  (best)" : "")));
  pickSel.addEventListener("change", () => pick(pickSel.value));
  function pick(m) {
    picked = m; pickSel.value = m;
    drawRanking(); drawCorr(); drawSequence();
  }

  /* ---------------------------------------------------------------- along the sequence */
  const SQ = D.sequence;
  function drawSequence() {
    const seq = SQ.seq_id, n = seq.length;
    if (!n) { $("seq-view").textContent = "No residues in residues.csv."; return; }
    const mi = SQ.models.indexOf(picked), nm = SQ.models.length;
    const L = 150, Rm = 20, W = Math.max(900, Math.min(1170, L + Rm + 12 * n)), cw = (W - L - Rm) / (seq[n - 1] - seq[0] + 1);
    const xs = (s) => L + (s - seq[0]) * cw;
    const rowH = nm > 40 ? 6 : 12, h1 = 120, h2 = 100, h3 = 26, gap = 26;
    const y1 = 24, y2 = y1 + h1 + gap, y3 = y2 + h2 + gap, y4 = y3 + h3 + gap, H = y4 + nm * rowH + 40;
    let s = "";
    // 1. RMS z of the picked model
    const vals = mi >= 0 ? SQ.rms_z[mi] : [];
    const flagged = new Set(SQ.flagged_residues[picked] || []);
    const zmax = Math.max(S.z_max, ...vals.filter(ok));
    const yz = (v) => y1 + h1 - h1 * v / zmax;
    s += `<text x="${L}" y="${y1 - 8}" font-size="12">${esc(picked)}: RMS z per residue (black: residue has a flagged atom; dotted: z = 1, the expected size)</text>`;
    s += `<text x="${L - 8}" y="${y1 + h1 / 2}" font-size="11" text-anchor="end">RMS z</text>`;
    seq.forEach((r, k) => {
      if (!ok(vals[k])) return;
      s += `<rect class="bar" x="${xs(r) + 0.08 * cw}" y="${yz(vals[k])}" width="${0.84 * cw}" height="${y1 + h1 - yz(vals[k])}" ` +
        `fill="${flagged.has(r) ? S.emphasis : S.neutral_light}"${tipAttr([`${SQ.comp_id[k]} ${r}  (${picked})`, `RMS z ${fix(vals[k], 2)}`, flagged.has(r) ? "has a flagged atom" : "no flagged atom"])}/>`;
    });
    s += `<line x1="${L}" x2="${W - Rm}" y1="${yz(1)}" y2="${yz(1)}" stroke="${S.neutral}" stroke-dasharray="2 3"/>` +
         `<line x1="${L}" x2="${W - Rm}" y1="${y1 + h1}" y2="${y1 + h1}" stroke="#000"/>`;
    // 2. measured secondary shift
    const ss2 = SQ.secondary_shift, fin = ss2.value.filter(ok);
    const lim = Math.max(2, ...fin.map((v) => Math.abs(v) * 1.1)), y0 = y2 + h2 / 2, ys = (v) => y0 - (h2 / 2) * v / lim;
    s += `<text x="${L}" y="${y2 - 8}" font-size="12">Measured secondary shift \u0394\u03B4CA - \u0394\u03B4CB (data, not model): up (indigo) helix-like, down (sand) strand-like</text>`;
    s += `<text x="${L - 8}" y="${y0}" font-size="11" text-anchor="end">ppm</text>`;
    ss2.seq_id.forEach((r, k) => {
      const v = ss2.value[k];
      if (!ok(v)) return;
      s += `<rect class="bar" x="${xs(r) + 0.08 * cw}" y="${Math.min(ys(v), y0)}" width="${0.84 * cw}" height="${Math.abs(ys(v) - y0)}" ` +
        `fill="${v >= 0 ? S.helix_like : S.strand_like}" stroke="${S.neutral}" stroke-width="0.3"${tipAttr([`residue ${r}`, `\u0394\u03B4CA - \u0394\u03B4CB ${sgn(v, 2)} ppm`, v >= 0 ? "helix-like" : "strand-like"])}/>`;
    });
    s += `<line x1="${L}" x2="${W - Rm}" y1="${y0}" y2="${y0}" stroke="#000"/>`;
    // 3. secondary structure of the picked model
    const ent = SQ.ss[picked];
    s += `<text x="${L - 8}" y="${y3 + h3 / 2 + 4}" font-size="11" text-anchor="end">SS</text>`;
    if (ent) {
      s += `<text x="${L}" y="${y3 - 6}" font-size="12">Secondary structure of ${esc(ent.drawn_for)}: box helix, arrow strand, line other (method in the caption)</text>`;
      s += `<line x1="${L}" x2="${W - Rm}" y1="${y3 + h3 / 2}" y2="${y3 + h3 / 2}" stroke="${S.neutral_light}"/>`;
      let st = 0;
      for (let k = 1; k <= ent.ss.length; k++) {
        if (k < ent.ss.length && ent.ss[k] === ent.ss[st] && ent.seq_id[k] === ent.seq_id[k - 1] + 1) continue;
        const kind = ent.ss[st], a = xs(ent.seq_id[st]), b = xs(ent.seq_id[k - 1] + 1), yc = y3 + h3 / 2;
        const t = tipAttr([`${kind === "H" ? "helix" : kind === "E" ? "strand" : "other"} ${ent.seq_id[st]}-${ent.seq_id[k - 1]}`]);
        if (kind === "H") s += `<rect class="ss" x="${a}" y="${y3 + 3}" width="${b - a}" height="${h3 - 6}" fill="${S.neutral}"${t}/>`;
        else if (kind === "E") {
          const hl = Math.min(1.5 * cw, b - a);
          s += `<path class="ss" d="M${a} ${yc - 5}L${b - hl} ${yc - 5}L${b - hl} ${yc - 11}L${b} ${yc}L${b - hl} ${yc + 11}L${b - hl} ${yc + 5}L${a} ${yc + 5}Z" fill="${S.neutral_light}" stroke="${S.neutral}" stroke-width="0.5"${t}/>`;
        }
        st = k;
      }
    } else s += `<text x="${L}" y="${y3 + h3 / 2 + 4}" font-size="11" fill="${S.neutral}">secondary structure of ${esc(picked)} not in summary.json</text>`;
    // 4. models x residues strip
    s += `<text x="${L}" y="${y4 - 8}" font-size="12">Models with embedded points, best first: RMS |z| per residue (hatched: no data; click a row to pick the model)</text>`;
    s += `<defs><pattern id="nodata" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">` +
         `<rect width="6" height="6" fill="#fff"/><line x1="0" y1="0" x2="0" y2="6" stroke="${S.no_data_edge}" stroke-width="2"/></pattern></defs>`;
    s += `<rect x="${L}" y="${y4}" width="${W - L - Rm}" height="${nm * rowH}" fill="url(#nodata)"/>`;
    SQ.models.forEach((m, a) => {
      const y = y4 + a * rowH;
      s += `<g class="strip-row" data-model="${esc(m)}">`;
      if (rowH >= 10 || a % 5 === 0) s += `<text x="${L - 6}" y="${y + rowH - 2}" font-size="${Math.min(11, rowH)}" text-anchor="end"${m === picked ? ' font-weight="bold"' : ""}>${esc(m)}</text>`;
      seq.forEach((r, k) => {
        const v = SQ.rms_z[a][k];
        if (!ok(v)) return;
        s += `<rect x="${xs(r)}" y="${y}" width="${cw + 0.3}" height="${rowH + 0.3}" fill="${shade(Math.min(1, v / S.z_max))}"` +
          `${tipAttr([`${m}`, `${SQ.comp_id[k]} ${r}`, `RMS |z| ${fix(v, 2)}`])}/>`;
      });
      s += "</g>";
    });
    if (mi >= 0) s += `<rect x="${L}" y="${y4 + mi * rowH}" width="${W - L - Rm}" height="${rowH}" fill="none" stroke="#000" stroke-width="1.5"/>`;
    const ax = axes(W, y4 + nm * rowH + 36, { l: L, r: Rm, t: y4, b: 36 }, seq[0] - 0.5, seq[n - 1] + 0.5, 0, 1, "residue number (shift-list Seq_ID)", null);
    s += ax.svg;
    // colour scale
    for (let k = 0; k < 30; k++) s += `<rect x="${W - Rm - 150 + 5 * k}" y="${H - 12}" width="5.2" height="8" fill="${shade(k / 29)}"/>`;
    s += `<text x="${W - Rm - 156}" y="${H - 5}" font-size="10" text-anchor="end">RMS |z| 0</text><text x="${W - Rm + 2}" y="${H - 5}" font-size="10">${S.z_max}+</text>`;
    $("seq-view").innerHTML = `<svg id="seq-svg" width="${W}" height="${H + 4}" viewBox="0 0 ${W} ${H + 4}">${s}</svg>`;
    $("seq-caption").textContent = "z = residual / expected error of the nucleus class. Secondary shift = measured - offset - random coil " +
      "(base values of the shipped table; Gly: CA only), from the measured data, the same for every model. Secondary structure " +
      (SQ.ss[picked] ? `of ${SQ.ss[picked].drawn_for}: ${SQ.ss[picked].method}. ` : "not available in summary.json. ") + "Strip colours: " + S.sequential_name + ".";
  }
  $("seq-view").addEventListener("click", (ev) => {
    const g = ev.target.closest("g.strip-row");
    if (g) pick(g.getAttribute("data-model"));
  });

  /* ---------------------------------------------------------------- referencing */
  function drawReferencing() {
    const kinds = ["H", "C", "N"].filter((k) => D.offsets[k]);
    let t = "<table class=\"data\"><thead><tr><th class=\"txt\">isotope</th><th>offset (ppm)</th><th>95 % interval</th><th>n</th>" +
            "<th class=\"txt\">state</th><th>threshold</th><th class=\"txt\">per atom (ppm)</th></tr></thead><tbody>";
    for (const k of kinds) {
      const o = D.offsets[k], per = o.per_atom || {};
      const pa = Object.keys(per).map((a) => `${a} ${sgn(typeof per[a] === "object" && per[a] ? per[a].value : per[a], 2)}`).join(", ");
      t += `<tr><td class="txt">${esc(S.isotope_label[k])}</td><td>${sgn(o.value, 3)}</td><td>${sgn(o.low, 2)} to ${sgn(o.high, 2)}</td>` +
           `<td>${esc(o.n === undefined ? "-" : o.n)}</td><td class="txt">${o.applied ? "applied" : "not applied"}</td>` +
           `<td>${ok(o.threshold) ? fix(o.threshold, 2) : "-"}</td><td class="txt">${esc(pa)}</td></tr>`;
    }
    $("ref-table").innerHTML = kinds.length ? t + "</tbody></table>" : "<p>summary.json has no referencing offsets.</p>";
    const all = [];
    for (const m of D.points_models) for (const i of rowsOf[m] || []) if (ok(R.residual[i])) all.push(i);
    let panels = "";
    for (const x of S.nucleus_order) {
      const rows = all.filter((i) => col("nucleus", i) === x);
      if (!rows.length) continue;
      const o = D.offsets[S.offset_type[x]], v = o && ok(o.value) ? o.value : 0, applied = !!(o && o.applied);
      const after = rows.map((i) => (applied ? R.residual[i] : R.residual[i] - v));
      const before = rows.map((i) => (applied ? R.residual[i] + (ok(R.offset[i]) ? R.offset[i] : v) : R.residual[i]));
      const both = before.concat(after).sort((p, q) => p - q), q = (f) => both[Math.floor(f * (both.length - 1))];
      const a = Math.min(q(0.005), -0.1), b = Math.max(q(0.995), 0.1), nb = 24, w = (b - a) / nb;
      const hist = (arr) => { const h = new Array(nb).fill(0); for (const d of arr) h[Math.max(0, Math.min(nb - 1, Math.floor((d - a) / w)))]++; return h; };
      const ha = hist(after), hb = hist(before), top = Math.max(...ha, ...hb, 1);
      const W = 250, H = 170, mg = { l: 40, r: 8, t: 34, b: 34 };
      const ax = axes(W, H, mg, a, b, 0, top * 1.1, "measured - predicted (ppm)", "atoms");
      let s = ax.svg;
      ha.forEach((c, k) => { if (c) s += `<rect x="${ax.sx(a + k * w)}" y="${ax.sy(c)}" width="${ax.sx(a + w) - ax.sx(a)}" height="${ax.sy(0) - ax.sy(c)}" fill="${colour(x)}" fill-opacity="0.75"${tipAttr([`${x} after the offset`, `${fix(a + k * w, 2)} to ${fix(a + (k + 1) * w, 2)} ppm: ${c} atoms`])}/>`; });
      let p = `M${ax.sx(a)} ${ax.sy(0)}`;
      hb.forEach((c, k) => { p += `L${ax.sx(a + k * w)} ${ax.sy(c)}L${ax.sx(a + (k + 1) * w)} ${ax.sy(c)}`; });
      s += `<path d="${p}L${ax.sx(b)} ${ax.sy(0)}" fill="none" stroke="#000" stroke-width="1"/>`;
      if (a < 0 && b > 0) s += `<line x1="${ax.sx(0)}" x2="${ax.sx(0)}" y1="${mg.t}" y2="${ax.sy(0)}" stroke="${S.neutral}" stroke-dasharray="2 3"/>`;
      const head = o ? `${x}: ${iso(x)} offset ${sgn(v, 2)} ppm, ${applied ? "applied" : "not applied"}` : `${x}: no ${iso(x)} offset in summary.json`;
      s += `<text x="4" y="14" font-size="11.5">${esc(head)}</text>`;
      panels += `<svg class="refhist" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}">${s}</svg>`;
    }
    $("ref-panels").innerHTML = panels;
    $("ref-caption").textContent = "Histograms: residuals measured - predicted per nucleus class, pooled over the " +
      `${D.points_models.length} model(s) with embedded points; black outline before the offset, filled (class colour) after it. ` +
      "One offset per isotope (1H, 13C, 15N), subtracted from the measured shifts. 'Not applied' means the offset was estimated but " +
      "judged too small or uncertain to correct (--reref); the filled histogram then shows what the correction would do. " +
      "Values outside the 0.5-99.5 percentile range are piled into the end bins.";
  }

  /* ---------------------------------------------------------------- flags and data checks */
  const F = D.flags;
  function table(id, cols, rows, wrapCols) {
    const head = cols.map((c) => `<th class="txt">${esc(c)}</th>`).join("");
    const body = rows.map((r) => "<tr>" + r.map((c, k) => `<td class="${wrapCols.indexOf(k) >= 0 ? "wrap" : "txt"}">${esc(c)}</td>`).join("") + "</tr>").join("");
    $(id).innerHTML = `<thead><tr>${head}</tr></thead><tbody>${body}</tbody>`;
  }
  function drawFlags() {
    const q = $("flag-filter").value.trim().toLowerCase(), klass = $("flag-class").value;
    const match = (r) => !q || r.join(" ").toLowerCase().indexOf(q) >= 0;
    const ci = F.flag_columns.indexOf("class");
    const fr = F.flags.filter((r) => match(r) && (!klass || r[ci] === klass));
    const cr = F.checks.filter(match);
    if (F.flag_columns.length) table("flag-table", F.flag_columns, fr, []);
    if (F.check_columns.length) table("check-table", F.check_columns, cr, [3, 4]);
    $("flag-count").textContent = `${fr.length} of ${F.flags.length} flagged atoms, ${cr.length} of ${F.checks.length} data-check findings shown`;
  }
  $("flag-filter").addEventListener("input", drawFlags);
  $("flag-class").addEventListener("change", drawFlags);
  $("flag-notes").textContent = F.notes.join(" ");
  $("residue-flags").innerHTML = (F.residues || []).length
    ? `<p>Residues disagreeing as a whole (${F.residues.length}):</p><ul>` +
      F.residues.map((r) => `<li>${esc(r)}</li>`).join("") + "</ul>"
    : "";

  /* ---------------------------------------------------------------- inputs and notes */
  function drawInputs() {
    let h = "<dl class=\"kv\"><dt>Inputs</dt>";
    for (const f of M.inputs) h += `<dd>${esc(f.kind)}  ${esc(f.file)}  sha256 ${esc(String(f.sha256 || "-").slice(0, 12))}...  ${esc(f.detail)}</dd>`;
    if (M.skipped.length) h += `<dt>Skipped models (${M.skipped.length}, not scored)</dt>` + M.skipped.map((x) => `<dd>${esc(x.file)}: ${esc(x.reason)}</dd>`).join("");
    h += "<dt>Mapping of shift list to models</dt>";
    for (const m of M.mapping) h += `<dd>${esc(m.ensemble)} chain ${esc(m.chain)}: identity ${fix(m.identity, 2)}, coverage ${fix(m.coverage, 2)}, ` +
      `${esc(typeof m.offsets === "string" ? m.offsets : JSON.stringify(m.offsets))}, ${esc((m.mismatches || []).length)} mismatch(es)</dd>`;
    h += `<dt>Parameters (referencing mode ${esc(M.reref_mode || "-")})</dt><dd>` +
      Object.keys(M.parameters).map((k) => esc(`${k}=${JSON.stringify(M.parameters[k])}`)).join("  ") + "</dd>";
    h += "<dt>Expected error per nucleus class (ppm)</dt><dd>" + Object.keys(M.expected_error).map((k) => `${esc(k)} ${fix(M.expected_error[k], 3)}`).join(", ") + "</dd>";
    h += `<dt>Warnings and notes (${M.warnings.length + M.notes.length})</dt>`;
    for (const w of M.warnings.concat(M.notes)) h += `<dd>${esc(w)}</dd>`;
    h += `<dt>What this page summarises</dt><dd>${esc(D.summarised.length ? D.summarised.join(" ") : "Nothing: every model's points are embedded.")}` +
      ` The ranking table holds all ${RK.model.length} models of ranking.csv, ${PAGE} per page.</dd></dl>`;
    $("inputs").innerHTML = h;
  }

  drawRanking(); drawCorr(); drawSequence(); drawReferencing(); drawFlags(); drawInputs();
  pickSel.value = picked;
  document.body.setAttribute("data-ready", "1");
})();
