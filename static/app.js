// tidetally page: choose a gauge, then say next season's outlook in words and pictures.
// Every number shown comes from the service's JSON API on this same origin.
"use strict";

(function () {
  const $ = (id) => document.getElementById(id);
  const MONTHS = ["January", "February", "March", "April", "May", "June", "July", "August",
    "September", "October", "November", "December"];
  const INITIALS = "JFMAMJJASOND";
  window.tidetallyErrors = [];
  window.addEventListener("error", (ev) => window.tidetallyErrors.push(String(ev.message)));
  window.addEventListener("unhandledrejection", (ev) => window.tidetallyErrors.push(String(ev.reason)));
  const state = { gauges: [], current: null, charts: {}, outlook: null, rows: [], loadToken: 0 };

  // ---- formatting (the browser test formats API numbers the same way) ----
  function percent(p) {
    if (p < 0.005) return "less than 1%";
    if (p > 0.995) return "more than 99%";
    return Math.round(p * 100) + "%";
  }
  function oneDecimal(x) { return (Math.round(x * 10) / 10).toFixed(1); }
  function daysWord(n) { return n === 1 ? "day" : "days"; }
  function el(tag, attrs, children) {
    const node = document.createElement(tag);
    Object.entries(attrs || {}).forEach(([k, v]) => {
      if (k === "text") node.textContent = v; else node.setAttribute(k, v);
    });
    (children || []).forEach((c) => node.append(c));
    return node;
  }
  /** A number from the API, with its raw value kept for checking. */
  function figure(field, raw, text) {
    return el("strong", { "data-field": field, "data-raw": String(raw), text });
  }

  /** "2026-DJF" -> { first: "December 2026", last: "February 2027", year: 2026, name: "DJF" }. */
  function seasonWords(label) {
    const m = /^(\d{4})-([A-Z]+)$/.exec(label || "");
    if (!m) return null;
    const year = Number(m[1]);
    const name = m[2];
    for (let start = 0; start < 12; start += 1) {
      let ok = name.length <= 12;
      for (let i = 0; ok && i < name.length; i += 1) ok = INITIALS[(start + i) % 12] === name[i];
      if (ok) {
        const end = start + name.length - 1;
        const endYear = year + Math.floor(end / 12);
        return { year, name, first: `${MONTHS[start]} ${year}`, last: `${MONTHS[end % 12]} ${endYear}` };
      }
    }
    return { year, name, first: label, last: label };
  }

  async function getJson(url) {
    let response;
    try {
      response = await fetch(url, { headers: { Accept: "application/json" } });
    } catch (err) {
      return { ok: false, detail: "the service could not be reached" };
    }
    let body = null;
    try { body = await response.json(); } catch (err) { body = null; }
    if (!response.ok) {
      const said = body && body.detail ? String(body.detail) : `the service answered ${response.status}`;
      const detail = said.replace(/[.\s]+$/, "");
      return { ok: false, status: response.status, detail };
    }
    return { ok: true, data: body };
  }

  // ---- gauge chooser ----
  function drawPositions(gauges) {
    const svg = $("gauge-plot");
    const ns = "http://www.w3.org/2000/svg";
    svg.textContent = "";
    if (!gauges.length) return;
    const lats = gauges.map((g) => g.latitude);
    const lons = gauges.map((g) => g.longitude);
    const midLat = (Math.min(...lats) + Math.max(...lats)) / 2;
    const kx = Math.cos((midLat * Math.PI) / 180);
    const spanX = Math.max(0.05, (Math.max(...lons) - Math.min(...lons)) * kx);
    const spanY = Math.max(0.05, Math.max(...lats) - Math.min(...lats));
    const W = Math.round(Math.max(300, Math.min(720, svg.clientWidth || 640)));
    const H = Math.round(Math.max(200, Math.min(330, W * 0.52)));
    const pad = Math.round(Math.max(40, W * 0.1));
    svg.setAttribute("viewBox", `0 0 ${W} ${H}`);
    const scale = Math.min((W - 2 * pad) / spanX, (H - 2 * pad) / spanY);
    const cx = (Math.min(...lons) + Math.max(...lons)) / 2;
    const px = (lon) => W / 2 + (lon - cx) * kx * scale;
    const py = (lat) => H / 2 - (lat - midLat) * scale;
    const mk = (tag, attrs) => {
      const n = document.createElementNS(ns, tag);
      Object.entries(attrs).forEach(([k, v]) => n.setAttribute(k, v));
      return n;
    };
    // Graticule every 0.1 or 0.25 degrees, labelled, so positions read as coordinates.
    const step = Math.max(spanX / kx, spanY) > 0.8 ? 0.25 : 0.1;
    const lonMin = cx - (W / 2) / (kx * scale), lonMax = cx + (W / 2) / (kx * scale);
    const latMin = midLat - (H / 2) / scale, latMax = midLat + (H / 2) / scale;
    for (let lon = Math.ceil(lonMin / step) * step; lon <= lonMax; lon += step) {
      svg.append(mk("line", { class: "grid-line", x1: px(lon), x2: px(lon), y1: 0, y2: H }));
      const t = mk("text", { class: "grid-label", x: px(lon) + 3, y: H - 5 });
      t.textContent = `${Math.abs(lon).toFixed(step < 0.25 ? 1 : 2)}°${lon < 0 ? "W" : "E"}`;
      svg.append(t);
    }
    for (let lat = Math.ceil(latMin / step) * step; lat <= latMax; lat += step) {
      svg.append(mk("line", { class: "grid-line", x1: 0, x2: W, y1: py(lat), y2: py(lat) }));
      if (py(lat) < 16 || py(lat) > H - 18) continue;
      const t = mk("text", { class: "grid-label", x: 4, y: py(lat) - 3 });
      t.textContent = `${Math.abs(lat).toFixed(step < 0.25 ? 1 : 2)}°${lat < 0 ? "S" : "N"}`;
      svg.append(t);
    }
    gauges.forEach((g) => {
      const group = mk("g", {
        class: "gauge-dot", tabindex: "0", role: "button", "data-gauge": g.id,
        "aria-label": `${g.name}, ${g.latitude.toFixed(2)}° latitude, ${g.longitude.toFixed(2)}° longitude`,
        "aria-pressed": "false",
      });
      const x = px(g.longitude), y = py(g.latitude);
      group.append(mk("circle", { class: "ring", cx: x, cy: y, r: 10 }));
      group.append(mk("circle", { class: "core", cx: x, cy: y, r: 3.5 }));
      const right = x < W - 120;
      const label = mk("text", { x: right ? x + 15 : x - 15, y: y + 4, "text-anchor": right ? "start" : "end" });
      label.textContent = g.name;
      group.append(label);
      group.addEventListener("click", () => choose(g.id));
      group.addEventListener("keydown", (ev) => {
        if (ev.key === "Enter" || ev.key === " ") { ev.preventDefault(); choose(g.id); }
      });
      svg.append(group);
    });
  }

  function markChosen(id) {
    $("gauge-select").value = id;
    document.querySelectorAll(".gauge-dot").forEach((n) => {
      n.setAttribute("aria-pressed", n.getAttribute("data-gauge") === id ? "true" : "false");
    });
    const g = state.gauges.find((x) => x.id === id);
    if (g) {
      $("gauge-facts").textContent = `Minor flood threshold ${g.flood_threshold_m.toFixed(2)} m above ${g.datum}. ` +
        (g.record ? `Water levels from ${g.record.first.slice(0, 10)} to ${g.record.last.slice(0, 10)}.` : "No water levels stored yet.");
    }
  }

  async function loadGauges() {
    const answer = await getJson("/api/v1/gauges");
    const select = $("gauge-select");
    if (!answer.ok) {
      setStatus(`The gauge list is not available: ${answer.detail}.`, true);
      select.firstChild.textContent = "No gauges";
      return;
    }
    state.gauges = Array.isArray(answer.data) ? answer.data : answer.data.gauges || [];
    select.textContent = "";
    state.gauges.forEach((g) => select.append(el("option", { value: g.id, text: g.name })));
    select.disabled = state.gauges.length === 0;
    select.addEventListener("change", () => choose(select.value));
    drawPositions(state.gauges);
    const wanted = decodeURIComponent(location.hash.replace(/^#gauge=/, ""));
    const first = state.gauges.find((g) => g.id === wanted) || state.gauges.find((g) => g.model_ready) || state.gauges[0];
    if (first) choose(first.id, true);
    else setStatus("No gauges are stored on this service yet.", true);
  }

  function setStatus(text, problem) {
    const s = $("status");
    s.textContent = text;
    s.hidden = !text;
    s.classList.toggle("problem", Boolean(problem));
  }

  // ---- outlook in words ----
  function meaningfulThreshold(outlook) {
    const list = outlook.exceedance.slice().sort((a, b) => a.days - b.days);
    return list.find((e) => e.days > outlook.median) || list[list.length - 1] || null;
  }

  function renderSummary(gauge, outlook) {
    const words = seasonWords(outlook.season);
    const summary = $("summary");
    summary.textContent = "";
    const when = words ? `${words.first} to ${words.last}` : outlook.season;
    summary.append(`At ${gauge.name}, from ${when} (${outlook.season_days} days), expect about `,
      figure("mean", outlook.mean, oneDecimal(outlook.mean)),
      " flood days; most likely between ",
      figure("p10", outlook.p10, String(outlook.p10)), " and ",
      figure("p90", outlook.p90, String(outlook.p90)),
      " (8 chances in 10).");
    const k = meaningfulThreshold(outlook);
    if (k) {
      summary.append(" The chance of ", figure("exceed-days", k.days, `${k.days} or more`),
        ` flood ${daysWord(k.days)} is `, figure("exceed-probability", k.probability, percent(k.probability)), ".");
    }
    summary.hidden = false;

    const compare = $("compare");
    compare.textContent = "";
    const t = outlook.terciles.find((x) => x.reference === "1991-2020 climatology") || outlook.terciles[0];
    compare.append("In the ", t ? t.reference : "reference", " years this gauge averaged ",
      figure("climatological-mean", outlook.climatological_mean, oneDecimal(outlook.climatological_mean)),
      " flood days in this season.");
    const bar = $("tercile-bar");
    bar.textContent = "";
    if (t) {
      const [e1, e2] = t.edges;
      compare.append(` Against those years: `,
        figure("below", t.below, percent(t.below)), ` chance of a low season (fewer than ${e1} days), `,
        figure("near", t.near, percent(t.near)), ` of a usual one (${e1} to ${Math.max(e1, e2 - 1)} days), `,
        figure("above", t.above, percent(t.above)), ` of a high one (${e2} or more).`);
      [["below", "low", t.below], ["near", "usual", t.near], ["above", "high", t.above]].forEach(([cls, word, p]) => {
        const label = p >= 0.25 ? `${word} ${Math.round(p * 100)}%` : p >= 0.08 ? `${Math.round(p * 100)}%` : "";
        const span = el("span", { class: cls, text: label });
        span.style.flexBasis = `${(p * 100).toFixed(2)}%`;
        bar.append(span);
      });
      bar.hidden = false;
    } else {
      bar.hidden = true;
    }
    if (outlook.last_season_observed) {
      const last = outlook.last_season_observed;
      compare.append(` Last season (${last.season}) had ${last.flood_days} flood ${daysWord(last.flood_days)} in ${last.observed_days} observed days.`);
    }
    compare.hidden = false;

    const skill = $("skill-line");
    skill.textContent = "";
    skill.append(el("strong", { text: "Track record: " }),
      el("span", { "data-field": "verdict", "data-raw": outlook.skill.verdict, text: outlook.skill.verdict_text }),
      outlook.skill.seasons_scored ? ` (checked on ${outlook.skill.seasons_scored} past seasons it had not seen)` : "");
    skill.hidden = false;

    const list = $("caution-list");
    list.textContent = "";
    outlook.cautions.forEach((c) => list.append(el("li", { class: "api-caution", text: c })));
    if (!outlook.cautions.some((c) => /emergency managers/i.test(c) && /official forecasts/i.test(c))) {
      list.append(el("li", { text: "For warnings and decisions on the day, follow your local emergency managers and official forecasts." }));
    }
    $("issued").textContent = `Outlook issued ${outlook.issued_at.slice(0, 10)}, model ${outlook.model_version}.`;
  }

  // ---- tables ----
  function table(container, head, rows) {
    const t = el("table");
    const hr = el("tr", {}, head.map((h) => el("th", { scope: "col", text: h })));
    t.append(el("thead", {}, [hr]));
    const body = el("tbody");
    rows.forEach((r) => body.append(el("tr", {}, r.map((c) => el("td", { text: String(c) })))));
    t.append(body);
    container.textContent = "";
    container.append(t);
  }

  function atLeast(pmf) {
    let tail = 1;
    return pmf.map((p) => { const v = Math.max(0, tail); tail -= p; return v; });
  }

  function pctCell(p) { return (p * 100).toFixed(1) + "%"; }

  // ---- charts ----
  function replaceChart(name, build) {
    const box = $(`chart-${name}`);
    if (state.charts[name]) { state.charts[name].destroy(); delete state.charts[name]; }
    box.textContent = "";
    try {
      const u = build(box);
      if (u) {
        state.charts[name] = u;
        const canvas = u.root.querySelector("canvas");
        if (canvas) {
          canvas.setAttribute("role", "img");
          canvas.setAttribute("aria-label", $(`alt-${name}`).textContent);
        }
      }
    } catch (err) {
      box.append(el("p", { class: "status problem", text: `This chart could not be drawn: ${err.message}` }));
    }
  }

  function unavailable(name, detail) {
    if (state.charts[name]) { state.charts[name].destroy(); delete state.charts[name]; }
    $(`chart-${name}`).textContent = "";
    $(`chart-${name}`).append(el("p", { class: "status", text: `Not available yet: ${detail}.` }));
    $(`alt-${name}`).textContent = "";
    $(`table-${name}`).textContent = "";
  }

  function renderCounts(outlook) {
    const cum = atLeast(outlook.pmf);
    const mode = outlook.pmf.indexOf(Math.max(...outlook.pmf));
    const tail = outlook.exceedance.map((e) => `${percent(e.probability)} for ${e.days} or more`).join(", ");
    $("alt-counts").textContent = `Bars: the chance of each number of flood days, most likely ${mode}; ` +
      `the line falls from 100% as the count rises: ${tail}.`;
    const last = Math.max(outlook.p90 + 3, cum.findIndex((v) => v < 0.001));
    const rows = outlook.pmf.slice(0, last > 0 ? last + 1 : outlook.pmf.length)
      .map((p, i) => [i, pctCell(p), pctCell(cum[i])]);
    table($("table-counts"), ["flood days", "chance of exactly", "chance of this many or more"], rows);
    const shown = Object.assign({}, outlook, { pmf: outlook.pmf.slice(0, rows.length) });
    replaceChart("counts", (box) => TideCharts.counts(box, shown));
  }

  function ensoCategory(v) {
    // +/-0.5 deg C on the Nino-3.4 anomaly: the usual ENSO threshold (common practice).
    if (v == null || Number.isNaN(v)) return "unknown";
    if (v <= -0.5) return "la_nina";
    if (v >= 0.5) return "el_nino";
    return "neutral";
  }
  const DRIVER_WORDS = { enso: "ENSO", mjo: "MJO active days", wind: "along-shore wind",
    sea_level: "sea level", tide: "astronomical tide" };
  const DRIVER_SHORT = { enso: "ENSO", mjo: "MJO", wind: "wind", sea_level: "sea lvl", tide: "tide" };
  function driverName(name) { return DRIVER_WORDS[name] || name.replace(/_/g, " "); }
  const ENSO_WORDS = { la_nina: "La Niña", neutral: "neutral", el_nino: "El Niño", unknown: "not known" };

  function linearTrend(xs, ys) {
    const n = xs.length;
    if (n < 2) return { slope: 0, values: xs.map(() => null) };
    const mx = xs.reduce((a, b) => a + b, 0) / n;
    const my = ys.reduce((a, b) => a + b, 0) / n;
    let sxy = 0, sxx = 0;
    xs.forEach((x, i) => { sxy += (x - mx) * (ys[i] - my); sxx += (x - mx) * (x - mx); });
    const slope = sxx > 0 ? sxy / sxx : 0;
    return { slope, values: xs.map((x) => my + slope * (x - mx)) };
  }

  function renderHistory(history, hindcast, seasonName) {
    const rows = history.seasons
      .filter((r) => r.season.endsWith(`-${seasonName}`) && r.used_in_fit)
      .map((r) => ({ season: r.season, year: Number(r.season.slice(0, 4)), flood_days: r.flood_days,
        observed_days: r.observed_days, enso: ensoCategory(r.predictors ? r.predictors.enso : null) }));
    state.rows = rows;
    if (!rows.length) { unavailable("history", `no complete ${seasonName} seasons in the record`); return; }
    const trend = linearTrend(rows.map((r) => r.year), rows.map((r) => r.flood_days));
    let band = null;
    if (hindcast) {
      const bySeason = new Map(hindcast.cases.map((c) => [c.season, c]));
      band = { lo: rows.map((r) => (bySeason.get(r.season) || {}).p10 ?? null),
        hi: rows.map((r) => (bySeason.get(r.season) || {}).p90 ?? null) };
      if (band.lo.every((v) => v == null)) band = null;
    }
    const perDecade = trend.slope * 10;
    const counts = { la_nina: 0, neutral: 0, el_nino: 0, unknown: 0 };
    rows.forEach((r) => { counts[r.enso] += 1; });
    const most = rows.reduce((a, b) => (b.flood_days > a.flood_days ? b : a));
    $("alt-history").textContent = `${rows.length} past ${seasonName} seasons from ${rows[0].year} to ${rows[rows.length - 1].year}; ` +
      `the most flood days was ${most.flood_days} in ${most.season}. The straight-line trend ${perDecade >= 0 ? "rises" : "falls"} ` +
      `by ${Math.abs(perDecade).toFixed(1)} days per decade. Seasons by ENSO: ${counts.la_nina} La Niña, ` +
      `${counts.neutral} neutral, ${counts.el_nino} El Niño (±0.5 °C on the index).`;
    const hc = hindcast ? new Map(hindcast.cases.map((c) => [c.season, c])) : new Map();
    table($("table-history"), ["season", "flood days", "observed days", "ENSO", "outlook range (hindcast)"],
      rows.map((r) => {
        const c = hc.get(r.season);
        return [r.season, r.flood_days, r.observed_days, ENSO_WORDS[r.enso], c ? `${c.p10}–${c.p90}` : "—"];
      }));
    replaceChart("history", (box) => TideCharts.history(box, rows, trend.values, band));
  }

  /** Stated quantile levels 10% and 90% against how often the count fell at or below them. */
  function reliabilityPoints(cases) {
    if (!cases.length) return [];
    const below10 = cases.filter((c) => c.observed <= c.p10).length / cases.length;
    const below90 = cases.filter((c) => c.observed <= c.p90).length / cases.length;
    return [{ nominal: 0.1, observed: below10 }, { nominal: 0.9, observed: below90 }];
  }

  function renderSkill(hindcast) {
    const pts = reliabilityPoints(hindcast.cases);
    const inside = hindcast.cases.filter((c) => c.observed >= c.p10 && c.observed <= c.p90).length;
    $("alt-skill").textContent = `${hindcast.skill.verdict_text} ` + (pts.length
      ? `In ${hindcast.cases.length} past seasons the count fell at or below the stated 10% level ${percent(pts[0].observed)} of the time ` +
        `and at or below the 90% level ${percent(pts[1].observed)} of the time; ${inside} of ${hindcast.cases.length} fell inside the range. ` +
        "Points near the dashed line mean the stated chances can be trusted."
      : "No past seasons were scored.");
    $("alt-skill").setAttribute("data-verdict", hindcast.skill.verdict);
    const verdict = $("verdict-skill");
    verdict.textContent = hindcast.skill.verdict_text;
    verdict.className = `verdict ${hindcast.skill.verdict}`;
    table($("table-skill"), ["score", "this model", "long-term average", "trend only", "skill vs average"],
      hindcast.skill.scores.map((s) => [s.name, s.model.toFixed(3), s.climatology.toFixed(3), s.trend_only.toFixed(3),
        `${(s.skill_vs_climatology * 100).toFixed(0)}%`]));
    if (pts.length) replaceChart("skill", (box) => TideCharts.reliability(box, pts));
    else unavailable("skill", "no past seasons were scored");
  }

  function renderDrivers(outlook) {
    const list = outlook.drivers;
    if (!list.length) { unavailable("drivers", "this outlook uses no drivers"); return; }
    const words = list.map((d) => {
      const pctChange = Math.round((d.rate_ratio - 1) * 100);
      return `${driverName(d.name)} (${d.value.toFixed(2)} ${d.unit}) ${pctChange >= 0 ? "raises" : "lowers"} the flood-day rate by ${Math.abs(pctChange)}%` +
        ` (from ${d.rate_ratio_ci[0].toFixed(2)} to ${d.rate_ratio_ci[1].toFixed(2)} times)`;
    });
    $("alt-drivers").textContent = `For next season: ${words.join("; ")}. An interval that crosses 1 means the effect may be nothing.`;
    table($("table-drivers"), ["driver", "next season's value", "rate ratio", "interval"],
      list.map((d) => [`${driverName(d.name)} (${d.name})`, `${d.value.toFixed(2)} ${d.unit}`, d.rate_ratio.toFixed(2),
        `${d.rate_ratio_ci[0].toFixed(2)}–${d.rate_ratio_ci[1].toFixed(2)}`]));
    const named = list.map((d) => Object.assign({}, d, { name: DRIVER_SHORT[d.name] || d.name }));
    replaceChart("drivers", (box) => TideCharts.drivers(box, named));
  }

  // ---- downloads ----
  function outlookCsv(outlook) {
    const cum = atLeast(outlook.pmf);
    const lines = ["gauge,season,days,probability,probability_at_least"];
    outlook.pmf.forEach((p, i) => lines.push(`${outlook.gauge},${outlook.season},${i},${p},${cum[i]}`));
    return lines.join("\n") + "\n";
  }

  function setDownloads(outlook) {
    const base = `/api/v1/gauges/${encodeURIComponent(outlook.gauge)}`;
    const json = $("dl-json");
    json.href = `${base}/outlook?season=${encodeURIComponent(outlook.season)}`;
    json.setAttribute("download", `tidetally-outlook-${outlook.gauge}-${outlook.season}.json`);
    const csv = $("dl-csv");
    if (csv.href.startsWith("blob:")) URL.revokeObjectURL(csv.href);
    csv.href = URL.createObjectURL(new Blob([outlookCsv(outlook)], { type: "text/csv" }));
    csv.setAttribute("download", `tidetally-outlook-${outlook.gauge}-${outlook.season}.csv`);
    const seasons = $("dl-seasons");
    seasons.href = `${base}/seasons?format=csv`;
    seasons.setAttribute("download", `tidetally-seasons-${outlook.gauge}.csv`);
    $("downloads").hidden = false;
  }

  /** The chart `name` as a PNG blob (null when it is not drawn). */
  function chartPng(name, done) {
    const u = state.charts[name];
    if (!u) { done(null); return; }
    const title = document.querySelector(`#card-${name} h3`).textContent;
    TideCharts.toPng(u, `${title} · ${state.outlook ? `${state.outlook.gauge} ${state.outlook.season}` : ""}`, done);
  }

  function downloadChart(name) {
    chartPng(name, (blob) => {
      if (!blob) return;
      const a = el("a", { href: URL.createObjectURL(blob), download: `tidetally-${name}-${state.current}.png` });
      document.body.append(a);
      a.click();
      setTimeout(() => { URL.revokeObjectURL(a.href); a.remove(); }, 1000);
    });
  }

  // ---- choosing a gauge ----
  async function choose(id, initial) {
    const gauge = state.gauges.find((g) => g.id === id);
    if (!gauge) return;
    state.current = id;
    const token = (state.loadToken += 1);
    markChosen(id);
    if (!initial) history.replaceState(null, "", `#gauge=${encodeURIComponent(id)}`);
    setStatus(`Loading the outlook for ${gauge.name}…`, false);
    document.body.setAttribute("data-state", "loading");
    const base = `/api/v1/gauges/${encodeURIComponent(id)}`;
    const [outlookAnswer, historyAnswer, hindcastAnswer] = await Promise.all([
      getJson(`${base}/outlook`), getJson(`${base}/seasons`), getJson(`${base}/hindcast`)]);
    if (token !== state.loadToken) return;
    if (!outlookAnswer.ok) {
      state.outlook = null;
      $("summary").hidden = true; $("compare").hidden = true; $("tercile-bar").hidden = true; $("skill-line").hidden = true;
      $("charts").hidden = true; $("downloads").hidden = true;
      setStatus(`No outlook for ${gauge.name} yet: ${outlookAnswer.detail}.`, true);
      document.body.setAttribute("data-state", "no-outlook");
      return;
    }
    const outlook = outlookAnswer.data;
    state.outlook = outlook;
    setStatus("", false);
    renderSummary(gauge, outlook);
    document.dispatchEvent(new CustomEvent('tidetally:outlook', { detail: outlook }));
    $("charts").hidden = false;
    const words = seasonWords(outlook.season);
    renderCounts(outlook);
    if (historyAnswer.ok) renderHistory(historyAnswer.data, hindcastAnswer.ok ? hindcastAnswer.data : null, words ? words.name : "");
    else unavailable("history", historyAnswer.detail);
    if (hindcastAnswer.ok) renderSkill(hindcastAnswer.data);
    else unavailable("skill", hindcastAnswer.detail);
    renderDrivers(outlook);
    setDownloads(outlook);
    document.body.setAttribute("data-state", "ready");
    document.body.setAttribute("data-gauge", id);
  }

  function redrawOnResize() {
    let timer = null;
    let lastWidth = window.innerWidth;
    window.addEventListener("resize", () => {
      if (window.innerWidth === lastWidth) return;
      lastWidth = window.innerWidth;
      clearTimeout(timer);
      timer = setTimeout(() => {
        drawPositions(state.gauges);
        if (state.current) markChosen(state.current);
        Object.entries(state.charts).forEach(([name, u]) => {
          const box = $(`chart-${name}`);
          const width = Math.max(260, Math.floor(box.clientWidth));
          u.setSize({ width, height: Math.round(Math.min(320, Math.max(220, width * 0.58))) });
        });
      }, 150);
    });
  }

  window.tidetallyPage = { chartPng };

  document.addEventListener("DOMContentLoaded", () => {
    document.querySelectorAll("[data-download]").forEach((b) => {
      b.addEventListener("click", () => downloadChart(b.getAttribute("data-download")));
    });
    redrawOnResize();
    loadGauges();
  });
})();
