// tidetally charts: thin wrappers over the vendored uPlot (static/vendor/uplot-1.6.32).
// Each function draws into an empty element and returns the uPlot instance.
"use strict";

(function () {
  const INK = "#17262f";
  const MUTED = "#4a5a63";
  const GRID = "#e3ded2";
  const HARBOUR = "#12394a";
  const KELP = "#0e6b66";
  const BRICK = "#a8431f";
  const BELOW = "#2f6f9f";
  const NEAR = "#6b675c";
  const FONT = "12px system-ui, sans-serif";

  function size(el) {
    const width = Math.max(260, Math.floor(el.clientWidth || 320));
    return { width, height: Math.round(Math.min(320, Math.max(220, width * 0.58))), legend: { live: false } };
  }

  function axis(extra) {
    return Object.assign({
      stroke: MUTED,
      font: FONT,
      labelFont: "600 12px system-ui, sans-serif",
      grid: { stroke: GRID, width: 1 },
      ticks: { stroke: GRID, width: 1 },
    }, extra);
  }

  function pct(v) { return v == null ? "" : Math.round(v * 100) + "%"; }

  /** The count distribution as bars, with the chance of "n or more" as a step curve. */
  function counts(el, outlook) {
    const days = outlook.pmf.map((_, i) => i);
    let tail = 1;
    const atLeast = outlook.pmf.map((p) => { const v = Math.max(0, tail); tail -= p; return v; });
    const opts = Object.assign(size(el), {
      scales: { x: { time: false }, pmf: { range: (u, lo, hi) => [0, Math.max(0.05, hi * 1.15)] }, cum: { range: [0, 1] } },
      axes: [
        axis({ label: "flood days in the season" }),
        axis({ scale: "pmf", label: "exactly", values: (u, v) => v.map(pct) }),
        axis({ scale: "cum", side: 1, grid: { show: false }, label: "this many or more", values: (u, v) => v.map(pct) }),
      ],
      series: [
        { label: "days" },
        { label: "exactly", scale: "pmf", stroke: HARBOUR, fill: "rgba(18,57,74,0.72)", width: 0,
          paths: uPlot.paths.bars({ size: [0.78, 40] }), points: { show: false }, value: (u, v) => pct(v) },
        { label: "this many or more", scale: "cum", stroke: BRICK, width: 2.5,
          paths: uPlot.paths.stepped({ align: 1 }), points: { show: false }, value: (u, v) => pct(v) },
      ],
    });
    return new uPlot(opts, [days, outlook.pmf, atLeast], el);
  }

  /** Past seasons' counts over time, the hindcast range, a trend line and ENSO categories. */
  function history(el, rows, trend, band) {
    const x = rows.map((r) => r.year);
    const cat = (name) => rows.map((r) => (r.enso === name ? r.flood_days : null));
    const series = [
      { label: "season" },
      { label: "flood days", stroke: HARBOUR, width: 1.5, points: { show: false }, spanGaps: false },
      { label: "straight-line trend", stroke: KELP, width: 2, dash: [6, 4], points: { show: false } },
      { label: "La Niña", stroke: BELOW, fill: BELOW, paths: () => null, points: { show: true, size: 9, fill: BELOW } },
      { label: "ENSO neutral", stroke: NEAR, paths: () => null, points: { show: true, size: 8, fill: "#ffffff", width: 2 } },
      { label: "El Niño", stroke: BRICK, fill: BRICK, paths: () => null, points: { show: true, size: 9, fill: BRICK } },
    ];
    const data = [x, rows.map((r) => r.flood_days), trend, cat("la_nina"), cat("neutral"), cat("el_nino")];
    const bands = [];
    if (band) {
      series.push({ label: "outlook range (hindcast, 10–90%)", stroke: "rgba(14,107,102,0.45)", width: 1, points: { show: false } });
      series.push({ label: "", stroke: "rgba(14,107,102,0.45)", width: 1, points: { show: false } });
      data.push(band.hi, band.lo);
      bands.push({ series: [series.length - 2, series.length - 1], fill: "rgba(14,107,102,0.14)" });
    }
    const opts = Object.assign(size(el), {
      scales: { x: { time: false }, y: { range: (u, lo, hi) => [0, Math.max(4, hi * 1.1)] } },
      axes: [axis({ label: "season (year it starts)", values: (u, v) => v.map((t) => (Number.isInteger(t) ? String(t) : "")) }),
        axis({ label: "flood days" })],
      series, bands,
    });
    const u = new uPlot(opts, data, el);
    if (band) {
      const last = u.root.querySelectorAll(".u-legend .u-series");
      if (last.length) last[last.length - 1].style.display = "none";
    }
    return u;
  }

  /** Reliability of the outlook's quantiles: stated chance against how often it happened. */
  function reliability(el, points) {
    const x = [0].concat(points.map((p) => p.nominal), [1]);
    const diag = x.slice();
    const obs = [null].concat(points.map((p) => p.observed), [null]);
    const opts = Object.assign(size(el), {
      scales: { x: { time: false, range: [0, 1] }, y: { range: [0, 1] } },
      axes: [axis({ label: "stated chance", values: (u, v) => v.map(pct) }),
        axis({ label: "came true", values: (u, v) => v.map(pct) })],
      series: [
        { label: "stated", value: (u, v) => pct(v) },
        { label: "perfectly reliable", stroke: NEAR, width: 1.5, dash: [5, 5], points: { show: false }, value: (u, v) => pct(v) },
        { label: "this gauge's outlooks", stroke: KELP, width: 2, spanGaps: true, points: { show: true, size: 11, fill: KELP }, value: (u, v) => pct(v) },
      ],
    });
    return new uPlot(opts, [x, diag, obs], el);
  }

  /** Each driver's rate ratio with its interval; 1 means no effect. */
  function drivers(el, list) {
    const x = list.map((_, i) => i);
    const lo = Math.min(1, ...list.map((d) => d.rate_ratio_ci[0]));
    const hi = Math.max(1, ...list.map((d) => d.rate_ratio_ci[1]));
    const pad = (hi - lo) * 0.12 || 0.1;
    const opts = Object.assign(size(el), {
      scales: { x: { time: false, range: [-0.6, list.length - 0.4] }, y: { range: [Math.max(0, lo - pad), hi + pad] } },
      axes: [
        axis({ splits: () => x, values: () => list.map((d) => d.name), grid: { show: false } }),
        axis({ label: "rate ratio (1 = none)", values: (u, v) => v.map((t) => t.toFixed(2)) }),
      ],
      series: [
        { label: "driver", value: (u, v) => (v == null ? "" : list[v] ? list[v].name : "") },
        { label: "rate ratio", stroke: HARBOUR, paths: () => null, points: { show: true, size: 12, fill: HARBOUR },
          value: (u, v) => (v == null ? "" : v.toFixed(2)) },
      ],
      hooks: {
        draw: [(u) => {
          const ctx = u.ctx;
          ctx.save();
          const one = u.valToPos(1, "y", true);
          ctx.strokeStyle = BRICK; ctx.lineWidth = 1.5 * devicePixelRatio; ctx.setLineDash([6, 4]);
          ctx.beginPath(); ctx.moveTo(u.bbox.left, one); ctx.lineTo(u.bbox.left + u.bbox.width, one); ctx.stroke();
          ctx.setLineDash([]); ctx.strokeStyle = HARBOUR; ctx.lineWidth = 3 * devicePixelRatio;
          list.forEach((d, i) => {
            const cx = u.valToPos(i, "x", true);
            const y0 = u.valToPos(d.rate_ratio_ci[0], "y", true);
            const y1 = u.valToPos(d.rate_ratio_ci[1], "y", true);
            const cap = 7 * devicePixelRatio;
            ctx.beginPath(); ctx.moveTo(cx, y0); ctx.lineTo(cx, y1);
            ctx.moveTo(cx - cap, y0); ctx.lineTo(cx + cap, y0); ctx.moveTo(cx - cap, y1); ctx.lineTo(cx + cap, y1);
            ctx.stroke();
          });
          ctx.restore();
        }],
      },
    });
    return new uPlot(opts, [x, list.map((d) => d.rate_ratio)], el);
  }

  /** A PNG of a chart with a white background, its title and its legend labels. */
  function toPng(u, title, done) {
    const src = u.ctx.canvas;
    const ratio = src.width / u.width;
    const head = Math.round(34 * ratio);
    const labels = u.series.slice(1).filter((s) => s.label && s.show !== false);
    const foot = Math.round(26 * ratio);
    const out = document.createElement("canvas");
    out.width = src.width; out.height = src.height + head + foot;
    const ctx = out.getContext("2d");
    ctx.fillStyle = "#ffffff"; ctx.fillRect(0, 0, out.width, out.height);
    ctx.fillStyle = INK; ctx.font = `600 ${Math.round(15 * ratio)}px system-ui, sans-serif`;
    ctx.fillText(title, 8 * ratio, 22 * ratio);
    ctx.drawImage(src, 0, head);
    let x = 8 * ratio;
    ctx.font = `${Math.round(12 * ratio)}px system-ui, sans-serif`;
    labels.forEach((s) => {
      const colour = typeof s._stroke === "string" ? s._stroke : (typeof s.stroke === "function" ? s.stroke(u, 1) : INK);
      ctx.fillStyle = colour || INK; ctx.fillRect(x, out.height - foot + 6 * ratio, 12 * ratio, 12 * ratio);
      ctx.fillStyle = INK; ctx.fillText(s.label, x + 16 * ratio, out.height - foot + 16 * ratio);
      x += ctx.measureText(s.label).width + 34 * ratio;
    });
    out.toBlob(done, "image/png");
  }

  window.TideCharts = { counts, history, reliability, drivers, toPng };
})();
