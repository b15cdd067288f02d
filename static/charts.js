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

  /** Whole-number steps for axes that count days or years: never a tick at 2.5 days. */
  const WHOLE = [1, 2, 5, 10, 20, 25, 50, 100, 200, 500, 1000];

  /** The chart's size: exactly its box's width, so every axis stays inside it. */
  function size(el) {
    const width = Math.max(200, Math.floor(el.clientWidth || 320));
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
        axis({ label: "flood days in the season", incrs: WHOLE, values: (u, v) => v.map(String) }),
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
      series.push({ label: "range the count model gave, unseen (8 in 10)", stroke: "rgba(14,107,102,0.45)", width: 1, points: { show: false } });
      series.push({ label: "", stroke: "rgba(14,107,102,0.45)", width: 1, points: { show: false } });
      data.push(band.hi, band.lo);
      bands.push({ series: [series.length - 2, series.length - 1], fill: "rgba(14,107,102,0.14)" });
    }
    const opts = Object.assign(size(el), {
      scales: { x: { time: false }, y: { range: (u, lo, hi) => [0, Math.max(4, hi * 1.1)] } },
      axes: [axis({ label: "season (year it starts)", incrs: WHOLE, values: (u, v) => v.map(String) }),
        axis({ label: "flood days", incrs: WHOLE, values: (u, v) => v.map(String) })],
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

  /**
   * Each driver's push on the count in flood days (more above zero, fewer below), as bars.
   * `list` holds `{ name, short, delta }`; the short names are used where a name would not fit.
   */
  function drivers(el, list) {
    const x = list.map((_, i) => i);
    const labels = (u) => {
      const slot = (u.width - 60) / Math.max(1, list.length);
      return list.map((d) => (slot < 9 * d.name.length ? d.short || d.name : d.name));
    };
    const lo = Math.min(-1, ...list.map((d) => Math.floor(d.delta)));
    const hi = Math.max(1, ...list.map((d) => Math.ceil(d.delta)));
    const opts = Object.assign(size(el), {
      scales: { x: { time: false, range: [-0.6, list.length - 0.4] }, y: { range: [lo, hi] } },
      axes: [
        axis({ splits: () => x, values: (u) => labels(u), grid: { show: false } }),
        axis({ label: "flood days ±", incrs: WHOLE, values: (u, v) => v.map((t) => (t > 0 ? `+${t}` : String(t))) }),
      ],
      series: [
        { label: "driver", value: (u, v) => (v == null ? "" : list[v] ? list[v].name : "") },
        { label: "days more or fewer", stroke: HARBOUR, paths: () => null, points: { show: false },
          value: (u, v) => (v == null ? "" : v.toFixed(1)) },
      ],
      hooks: {
        draw: [(u) => {
          const ctx = u.ctx;
          ctx.save();
          const zero = u.valToPos(0, "y", true);
          const half = Math.max(6, (u.bbox.width / Math.max(1, list.length)) * 0.28);
          list.forEach((d, i) => {
            const cx = u.valToPos(i, "x", true);
            const top = u.valToPos(d.delta, "y", true);
            ctx.fillStyle = d.delta >= 0 ? BRICK : BELOW;
            ctx.fillRect(cx - half, Math.min(zero, top), 2 * half, Math.max(1.5 * devicePixelRatio, Math.abs(top - zero)));
          });
          ctx.strokeStyle = INK; ctx.lineWidth = 1.5 * devicePixelRatio;
          ctx.beginPath(); ctx.moveTo(u.bbox.left, zero); ctx.lineTo(u.bbox.left + u.bbox.width, zero); ctx.stroke();
          ctx.restore();
        }],
      },
    });
    return new uPlot(opts, [x, list.map((d) => d.delta)], el);
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
