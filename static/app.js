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
  const state = { gauges: [], current: null, charts: {}, outlook: null, rows: [], loadToken: 0, today: null };

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
  // Shared with static/calendar.js (loaded after this script).
  window.tidetallyFormat = Object.freeze({ el, percent, oneDecimal });
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

  /** "DJF" -> "December to February". */
  function seasonMonths(name) {
    const season = seasonWords(`2000-${name}`);
    return season && season.first !== `2000-${name}` ? `${season.first.split(" ")[0]} to ${season.last.split(" ")[0]}` : name;
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
    // Graticule lines far enough apart that their labels never run together.
    const STEPS = [0.01, 0.02, 0.05, 0.1, 0.2, 0.25, 0.5, 1, 2, 5, 10];
    const pick = (pxPerDegree, minPx) => STEPS.find((s) => s * pxPerDegree >= minPx) || STEPS[STEPS.length - 1];
    const lonStep = pick(kx * scale, 78);
    const latStep = pick(scale, 30);
    const decimals = (s) => (s >= 1 ? 0 : s >= 0.1 && Math.abs(s * 10 - Math.round(s * 10)) < 1e-9 ? 1 : 2);
    const lonMin = cx - (W / 2) / (kx * scale), lonMax = cx + (W / 2) / (kx * scale);
    const latMin = midLat - (H / 2) / scale, latMax = midLat + (H / 2) / scale;
    /** Boxes already taken by labels and dots: [x0, y0, x1, y1]. */
    const taken = [];
    const overlaps = (b) => taken.some((t) => b[0] < t[2] && b[2] > t[0] && b[1] < t[3] && b[3] > t[1]);
    const textWidth = (node, text, perChar) => {
      const measured = typeof node.getComputedTextLength === "function" ? node.getComputedTextLength() : 0;
      return measured > 0 ? measured : text.length * perChar;
    };
    for (let lon = Math.ceil(lonMin / lonStep) * lonStep; lon <= lonMax; lon += lonStep) {
      svg.append(mk("line", { class: "grid-line", x1: px(lon), x2: px(lon), y1: 0, y2: H }));
      const t = mk("text", { class: "grid-label", x: px(lon) + 3, y: H - 5 });
      t.textContent = `${Math.abs(lon).toFixed(decimals(lonStep))}°${lon < 0 ? "W" : "E"}`;
      svg.append(t);
      const w = textWidth(t, t.textContent, 6.6);
      if (px(lon) + 3 + w > W) { t.remove(); continue; }
      taken.push([px(lon) + 1, H - 17, px(lon) + 5 + w, H]);
    }
    for (let lat = Math.ceil(latMin / latStep) * latStep; lat <= latMax; lat += latStep) {
      svg.append(mk("line", { class: "grid-line", x1: 0, x2: W, y1: py(lat), y2: py(lat) }));
      if (py(lat) < 16 || py(lat) > H - 22) continue;
      const t = mk("text", { class: "grid-label", x: 4, y: py(lat) - 3 });
      t.textContent = `${Math.abs(lat).toFixed(decimals(latStep))}°${lat < 0 ? "S" : "N"}`;
      svg.append(t);
      taken.push([2, py(lat) - 15, 6 + textWidth(t, t.textContent, 6.6), py(lat)]);
    }
    gauges.forEach((g) => taken.push([px(g.longitude) - 11, py(g.latitude) - 11, px(g.longitude) + 11, py(g.latitude) + 11]));
    gauges.forEach((g) => {
      const group = mk("g", {
        class: "gauge-dot", tabindex: "0", role: "button", "data-gauge": g.id,
        "aria-label": `${g.name}, ${g.latitude.toFixed(2)}° latitude, ${g.longitude.toFixed(2)}° longitude`,
        "aria-pressed": "false",
      });
      const x = px(g.longitude), y = py(g.latitude);
      group.append(mk("circle", { class: "ring", cx: x, cy: y, r: 10 }));
      group.append(mk("circle", { class: "core", cx: x, cy: y, r: 3.5 }));
      const label = mk("text", { x: x + 15, y: y + 4 });
      label.textContent = g.name;
      group.append(label);
      svg.append(group);
      // The first of right, left, above, below (then further out) where the name fits
      // inside the plot without touching another name, dot or coordinate label.
      const w = textWidth(label, g.name, 7.4) + 4;
      const h = 16;
      const spots = [];
      [0, 14, 28].forEach((d) => {
        spots.push([x + 15, y + 4 + d, "start"], [x - 15, y + 4 + d, "end"], [x, y - 16 - d, "middle"], [x, y + 26 + d, "middle"]);
        if (d) spots.push([x + 15, y + 4 - d, "start"], [x - 15, y + 4 - d, "end"]);
      });
      const boxOf = ([lx, ly, anchor]) => {
        const x0 = anchor === "start" ? lx : anchor === "end" ? lx - w : lx - w / 2;
        return [x0 - 2, ly - h + 4, x0 + w, ly + 4];
      };
      const inside = (b) => b[0] >= 0 && b[2] <= W && b[1] >= 0 && b[3] <= H;
      const spot = spots.find((sp) => inside(boxOf(sp)) && !overlaps(boxOf(sp))) ||
        spots.find((sp) => inside(boxOf(sp))) || spots[0];
      label.setAttribute("x", spot[0]);
      label.setAttribute("y", spot[1]);
      label.setAttribute("text-anchor", spot[2]);
      taken.push(boxOf(spot));
      group.addEventListener("click", () => choose(g.id));
      group.addEventListener("keydown", (ev) => {
        if (ev.key === "Enter" || ev.key === " ") { ev.preventDefault(); choose(g.id); }
      });
    });
  }

  /** The gauge's local calendar day (`YYYY-MM-DD`) of an RFC 3339 time, at its UTC offset. */
  function localDay(iso, offset) {
    const m = /^([+-])(\d{2}):(\d{2})$/.exec(offset || "");
    const minutes = m ? (m[1] === "-" ? -1 : 1) * (Number(m[2]) * 60 + Number(m[3])) : 0;
    const t = Date.parse(iso);
    return Number.isFinite(t) ? new Date(t + minutes * 60000).toISOString().slice(0, 10) : String(iso).slice(0, 10);
  }

  function markChosen(id) {
    $("gauge-select").value = id;
    document.querySelectorAll(".gauge-dot").forEach((n) => {
      n.setAttribute("aria-pressed", n.getAttribute("data-gauge") === id ? "true" : "false");
    });
    const g = state.gauges.find((x) => x.id === id);
    if (g) {
      $("gauge-facts").textContent = `Minor flood threshold ${g.flood_threshold_m.toFixed(2)} m above ${g.datum}. ` +
        (g.record ? `Water levels from ${localDay(g.record.first, g.utc_offset)} to ${localDay(g.record.last, g.utc_offset)} ` +
          "(local dates)." : "No water levels stored yet.");
    }
  }

  /** Today from the service's one clock (`YYYY-MM-DD`), or null when it does not answer. */
  async function loadToday() {
    const answer = await getJson("/api/v1/clock");
    state.today = answer.ok && /^\d{4}-\d{2}-\d{2}$/.test(answer.data.today || "") ? answer.data.today : null;
  }

  async function loadGauges() {
    const [answer] = await Promise.all([getJson("/api/v1/gauges"), loadToday()]);
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

  /** `n` days in words with the right plural: "1 day", "0 days", "2 days". */
  function countDays(n) { return `${n} ${daysWord(n)}`; }

  /** The plan-on number as shown: "fewer than 1" below one day, else the whole number. */
  function planOnText(days) { return days < 1 ? "fewer than 1" : String(Math.round(days)); }

  /** Days between two `YYYY-MM-DD` dates (b - a). */
  function daysBetween(a, b) {
    return Math.round((Date.parse(`${b}T00:00:00Z`) - Date.parse(`${a}T00:00:00Z`)) / 86400000);
  }

  /**
   * Whether the outlook is for a season already over, or was made from a record that ends
   * more than a season before today (`today` from the service's clock).
   */
  function staleness(outlook, today) {
    if (!today) return null;
    const end = outlook.valid_until || outlook.last_day;
    if (end && today > end) return { kind: "past", end };
    const last = outlook.record_last_day;
    if (last && daysBetween(last, today) > (outlook.season_days || 92)) return { kind: "old-record", last };
    return null;
  }

  function renderFreshness(outlook, words) {
    const fresh = $("freshness");
    const issued = (outlook.issued_at || "").slice(0, 10);
    fresh.textContent = `Outlook issued ${issued}` +
      (outlook.record_last_day ? `, from water levels up to ${outlook.record_last_day}.` : ".");
    fresh.hidden = false;
    const notice = $("stale-notice");
    const stale = staleness(outlook, state.today);
    const when = words ? `${words.first} to ${words.last}` : outlook.season;
    if (!stale) {
      notice.hidden = true;
      notice.textContent = "";
      return;
    }
    notice.textContent = stale.kind === "past"
      ? `This outlook is for a past season: ${when} ended on ${stale.end}, before today (${state.today}). ` +
        "It needs newer water levels before it can speak for a coming season."
      : `This outlook is for a past season's data: its water levels stop at ${stale.last}, more than a season before today ` +
        `(${state.today}). It needs newer data before it can be trusted for a coming season.`;
    notice.hidden = false;
  }

  /** Whether "normal" at this gauge is its whole record rather than 1991-2020. */
  function normalIsWholeRecord(outlook) {
    return (outlook.plan_on && outlook.plan_on.basis === "record_average") ||
      outlook.cautions.some((c) => /whole record/i.test(c));
  }

  function renderSummary(gauge, outlook) {
    const words = seasonWords(outlook.season);
    const when = words ? `${words.first} to ${words.last}` : outlook.season;
    $("outlook-title").textContent = `${gauge.name}, ${when}`;
    renderFreshness(outlook, words);

    const plan = outlook.plan_on;
    const head = $("plan");
    head.textContent = "";
    const shown = planOnText(plan.days);
    head.append("Plan on ", plan.days < 1 ? "" : "about ",
      el("strong", { "data-plan-on": "", "data-raw": String(plan.days), text: shown }),
      ` flood ${plan.days < 1 || Math.round(plan.days) === 1 ? "day" : "days"}`,
      el("span", { class: "plan-range", text: ` (${plan.range[0]} to ${countDays(plan.range[1])} in 8 seasons out of 10)` }));
    head.hidden = false;
    const sentence = $("plan-sentence");
    sentence.textContent = "";
    sentence.append(el("strong", { text: "Track record: " }),
      el("span", { "data-field": "plan-sentence", text: plan.sentence }));
    sentence.hidden = false;

    const chances = $("chances");
    chances.textContent = "";
    const k = meaningfulThreshold(outlook);
    const own = plan.basis === "outlook";
    chances.append(own ? "The outlook's chances: " : "The outlook's own chances, which did no better than the average in past seasons: ");
    if (k) {
      chances.append(figure("exceed-probability", k.probability, percent(k.probability)),
        " for ", figure("exceed-days", k.days, `${k.days} or more`), ` flood ${daysWord(k.days)}`);
    }
    const t = outlook.terciles.find((x) => x.reference === "1991-2020 climatology") || outlook.terciles[0];
    const bar = $("tercile-bar");
    bar.textContent = "";
    if (t) {
      const [e1, e2] = t.edges;
      const usual = normalIsWholeRecord(outlook) ? "this gauge's whole record" : "the 1991–2020 seasons";
      chances.append(k ? "; against " : "against ", usual, ": ",
        figure("below", t.below, percent(t.below)), ` for a low season (fewer than ${countDays(e1)}), `,
        figure("near", t.near, percent(t.near)), ` for a usual one (${e1} to ${countDays(Math.max(e1, e2 - 1))}), `,
        figure("above", t.above, percent(t.above)), ` for a high one (${e2} or more).`);
      [["below", "low", t.below], ["near", "usual", t.near], ["above", "high", t.above]].forEach(([cls, word, p]) => {
        const label = p >= 0.25 ? `${word} ${Math.round(p * 100)}%` : p >= 0.08 ? `${Math.round(p * 100)}%` : "";
        const span = el("span", { class: cls, text: label });
        span.style.flexBasis = `${(p * 100).toFixed(2)}%`;
        bar.append(span);
      });
      bar.hidden = false;
    } else {
      chances.append(".");
      bar.hidden = true;
    }
    chances.hidden = false;

    const lastLine = $("last-season");
    if (outlook.last_season_observed) {
      const last = outlook.last_season_observed;
      const lw = seasonWords(last.season);
      lastLine.textContent = `Last time (${lw ? `${lw.first} to ${lw.last}` : last.season}): ` +
        `${countDays(last.flood_days)} flooded, out of ${countDays(last.observed_days)} with readings.`;
      lastLine.hidden = false;
    } else {
      lastLine.hidden = true;
    }

    const list = $("caution-list");
    list.textContent = "";
    outlook.cautions.forEach((c) => list.append(el("li", { class: "api-caution", text: c })));
    if (!outlook.cautions.some((c) => /emergency managers/i.test(c) && /official forecasts/i.test(c))) {
      list.append(el("li", { text: "For warnings and decisions on the day, follow your local emergency managers and official forecasts." }));
    }
    $("issued").textContent = `Outlook issued ${outlook.issued_at.slice(0, 10)}, model ${outlook.model_version}.`;
  }

  // ---- how the track record was checked (the only place scores are named) ----
  /** Each score in words once: what it measures and what 0 and 1 mean. */
  const SCORE_WORDS = {
    crps: ["Continuous ranked probability score (CRPS)",
      "how far the outlook's chances of each count of days lie from the count that happened, in days; 0 is a perfect outlook and larger is worse"],
    rps: ["Ranked probability score (RPS)",
      "how well the chances of a low, usual or high season matched the one that happened; 0 is perfect and 1 the worst possible, so larger is worse"],
    log_score: ["Logarithmic score",
      "minus the natural logarithm of the chance the outlook gave the count that happened; 0 means it gave that count certainty, and larger is worse"],
    brier: ["Brier score",
      "for “k or more days”, the squared gap between the stated chance and what happened (1 if it did, 0 if not); 0 is perfect and 1 the worst possible, so larger is worse"],
    skill: ["Skill against the average (for the CRPS: CRPSS)",
      "1 minus the outlook's score divided by the average's score; 1 is a perfect outlook, 0 no better than the average, and below 0 worse"],
  };

  function scoreLabel(name) {
    const m = /^brier_(\d+)$/.exec(name);
    if (m) return `Brier score, ${m[1]} or more days`;
    return (SCORE_WORDS[name] || [name])[0].replace(/ \(.*\)$/, "");
  }

  function renderHowChecked(skill) {
    const box = $("how-checked-body");
    box.textContent = "";
    const months = seasonMonths(skill.season_name);
    box.append(el("p", { text: `Each of ${skill.seasons_scored} past ${months} seasons was forecast by a model fitted ` +
      "without that season, then compared with what happened, and with two simple references: the long-term " +
      "average and the sea-level trend alone. The scores below are averages over those seasons." }));
    box.append(el("p", { class: "verdict-text", id: "verdict-skill", "data-verdict": skill.verdict, text: skill.verdict_text }));
    if (skill.perfect_enso_text) box.append(el("p", { class: "small", text: skill.perfect_enso_text }));
    const names = el("dl", { class: "score-words" });
    const used = new Set(skill.scores.map((s) => (/^brier_/.test(s.name) ? "brier" : s.name)));
    ["crps", "rps", "log_score", "brier", "skill"].filter((k) => k === "skill" || used.has(k)).forEach((k) => {
      names.append(el("dt", { text: SCORE_WORDS[k][0] }), el("dd", { text: `Measures ${SCORE_WORDS[k][1]}.` }));
    });
    box.append(names);
    const wrap = el("div", { class: "table-wrap", id: "table-scores" });
    box.append(wrap);
    table(wrap, ["score", "this outlook", "long-term average", "sea-level trend alone", "skill against the average"],
      skill.scores.map((s) => [scoreLabel(s.name), s.model.toFixed(3), s.climatology.toFixed(3),
        s.trend_only == null ? "—" : s.trend_only.toFixed(3), s.skill_vs_climatology.toFixed(2)]));
    box.append(el("p", { class: "small", text: "Sources: the CRPS and the logarithmic score as in Gneiting and Raftery (2007, " +
      "J. Amer. Statist. Assoc. 102, 359–378); the RPS as in Epstein (1969); the Brier score as in Brier (1950)." }));
    $("how-checked").hidden = false;
  }

  // ---- the words a planner needs, explained where each is first used ----
  /**
   * Each driver name and its one-sentence explanation. `pattern` finds a use of the name in
   * the page's text; the explanation is put in brackets right after the first visible use.
   */
  const GLOSSARY = [
    { term: "enso", pattern: /\bENSO\b|El Ni[ñn]o|La Ni[ñn]a/,
      text: "whether the tropical Pacific is in its warm El Niño, cool La Niña or neutral state, which shifts storms and sea level far away" },
    { term: "mjo", pattern: /\bMJO\b/,
      text: "a pulse of tropical rain and wind that circles the globe every 30 to 60 days" },
    { term: "wind", pattern: /\bwinds?\b/i,
      text: "the wind along the shore, which piles water against the coast or draws it away" },
    { term: "sea_level", pattern: /\bsea[- ]level(?: trend)?\b/i,
      text: "the slow rise of the average sea level over the years" },
    { term: "tide", pattern: /\b(?:astronomical )?tides?\b/i,
      text: "the rise and fall of the sea set by the Moon and Sun, known years ahead" },
    { term: "datum", pattern: /\bdatum\b/i,
      text: "the gauge's zero, from which its levels are measured" },
  ];
  const GLOSS_SKIP = "script, style, option, select, svg, canvas, button, h1, h2, h3, summary, .gloss";

  /** The glossary with the datum codes of the gauges (e.g. the code a gauge's levels are on). */
  function glossary() {
    const codes = [...new Set(state.gauges.map((g) => g.datum).filter(Boolean))]
      .map((c) => c.replace(/[.*+?^${}()|[\]\\]/g, "\\$&"));
    return GLOSSARY.map((g) => (g.term === "datum" && codes.length
      ? Object.assign({}, g, { pattern: new RegExp(`\\bdatum\\b|\\b(?:${codes.join("|")})\\b`, "i") })
      : g));
  }

  function visibleText(node) {
    const parent = node.parentElement;
    if (!parent || parent.closest(GLOSS_SKIP)) return false;
    return typeof parent.checkVisibility === "function" ? parent.checkVisibility() : parent.offsetParent !== null;
  }

  /** Puts each term's explanation after its first visible use on the page, once. */
  function explainFirstUses() {
    document.querySelectorAll(".gloss").forEach((n) => {
      const parent = n.parentNode;
      n.remove();
      if (parent) parent.normalize();
    });
    const pending = glossary();
    const walker = document.createTreeWalker(document.body, NodeFilter.SHOW_TEXT);
    const nodes = [];
    for (let n = walker.nextNode(); n; n = walker.nextNode()) nodes.push(n);
    // In reading order as laid out: on a phone the CSS moves the chooser and the answer
    // above the cautions, so the first use a reader sees is not the first in the document.
    const rank = new Map();
    const rankOf = (n) => {
      const block = n.parentElement && n.parentElement.closest("#main > *");
      if (!block) return n.parentElement && n.parentElement.closest("footer") ? Infinity : -Infinity;
      if (!rank.has(block)) rank.set(block, Number(getComputedStyle(block).order) || 0);
      return rank.get(block);
    };
    nodes.sort((a, b) => rankOf(a) - rankOf(b) || 0);
    for (const node of nodes) {
      if (!pending.length) break;
      if (!node.nodeValue.trim() || !visibleText(node)) continue;
      let current = node;
      let found = true;
      while (found && pending.length) {
        found = false;
        let best = null;
        pending.forEach((g, i) => {
          const m = g.pattern.exec(current.nodeValue);
          if (m && (!best || m.index < best.m.index)) best = { g, i, m };
        });
        if (best) {
          const after = current.splitText(best.m.index + best.m[0].length);
          const gloss = el("span", { class: "gloss", "data-gloss": best.g.term, text: ` (${best.g.text})` });
          current.parentNode.insertBefore(gloss, after);
          pending.splice(best.i, 1);
          current = after;
          found = true;
        }
      }
    }
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
  const DRIVER_SHORT = { enso: "ENSO", mjo: "MJO", wind: "wind", sea_level: "sea level", tide: "tide" };
  const DRIVER_TINY = { sea_level: "sea" };
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
    if (!rows.length) { unavailable("history", `no complete ${seasonMonths(seasonName)} seasons in the record`); return; }
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
    $("alt-history").textContent = `${rows.length} past ${seasonMonths(seasonName)} seasons from ${rows[0].year} to ${rows[rows.length - 1].year}; ` +
      `the most flood days was ${most.flood_days} in ${most.season}. The straight-line trend ${perDecade >= 0 ? "rises" : "falls"} ` +
      `by ${Math.abs(perDecade).toFixed(1)} days per decade. Seasons by ENSO: ${counts.la_nina} La Niña, ` +
      `${counts.neutral} neutral, ${counts.el_nino} El Niño (±0.5 °C on the index).`;
    const hc = hindcast ? new Map(hindcast.cases.map((c) => [c.season, c])) : new Map();
    table($("table-history"), ["season", "flood days", "observed days", "ENSO", "range the count model gave, unseen (8 in 10)"],
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
    const n = hindcast.cases.length;
    $("alt-skill").textContent = pts.length
      ? `In ${n} past seasons the seasonal count model, forecasting each without knowing it, saw the count fall at or below ` +
        `its stated 10% level ${percent(pts[0].observed)} of the time and at or below its 90% level ${percent(pts[1].observed)} ` +
        `of the time; ${inside} of ${n} fell inside its 8-in-10 range. Points near the dashed line mean the stated chances can be trusted.`
      : "No past seasons were scored.";
    $("alt-skill").setAttribute("data-verdict", hindcast.skill.verdict);
    table($("table-skill"), ["stated chance", "how often it came true"],
      pts.map((p) => [percent(p.nominal), percent(p.observed)]));
    if (pts.length) replaceChart("skill", (box) => TideCharts.reliability(box, pts));
    else unavailable("skill", "no past seasons were scored");
  }

  /** The expected count of the seasonal count model, which the driver effects belong to. */
  function countModelMean(outlook) {
    if (outlook.engine === "count" || !outlook.other_engine) return outlook.mean;
    return outlook.other_engine.engine === "count" ? outlook.other_engine.mean : outlook.mean;
  }

  /**
   * Each driver's effect in days: the count model's expected count against the same count
   * with this driver at its average of the fitted seasons (`effect` is that ratio).
   */
  function daysChange(outlook, d) {
    const m = countModelMean(outlook);
    return d.effect > 0 && Number.isFinite(d.effect) ? m - m / d.effect : 0;
  }

  /** "about 2 more days", "about 1 fewer day", or "little change (under half a day)". */
  function changeWords(delta) {
    const n = Math.round(Math.abs(delta));
    if (n === 0) return "little change (under half a day)";
    return `about ${n} ${delta > 0 ? "more" : "fewer"} ${daysWord(n)}`;
  }

  const DRIVER_LABEL = { enso: "ENSO", mjo: "MJO", wind: "Wind", sea_level: "Sea-level trend", tide: "Tide" };
  const UNIT_WORDS = { "share of days": (v) => `${Math.round(v * 100)}% of days`, degC: (v) => `${v.toFixed(2)} °C`,
    "m/s": (v) => `${v.toFixed(1)} m/s`, m: (v) => `${v.toFixed(3)} m`, days: (v) => `${v.toFixed(0)} days` };
  function valueWords(d) { return (UNIT_WORDS[d.unit] || ((v) => `${v.toFixed(2)} ${d.unit}`))(d.value); }

  function renderDrivers(outlook) {
    const list = outlook.drivers;
    const box = $("driver-list");
    box.textContent = "";
    if (!list.length) { unavailable("drivers", "this outlook uses no drivers"); return; }
    const changes = list.map((d) => ({ d, delta: daysChange(outlook, d) }));
    changes.forEach(({ d, delta }) => {
      box.append(el("li", {}, [el("strong", { text: DRIVER_LABEL[d.name] || d.name.replace(/_/g, " ") }),
        `: ${changeWords(delta)} ${Math.round(Math.abs(delta)) === 0 ? "from" : "than at"} its usual level.`]));
    });
    $("alt-drivers").textContent = "Bars: each driver's push on the season's count, in flood days, against a season with that " +
      `driver at its usual level: ${changes.map(({ d, delta }) => `${DRIVER_LABEL[d.name] || d.name} ${changeWords(delta)}`).join("; ")}.`;
    table($("table-drivers"), ["driver", "next season's value", "rate ratio", "95% interval", "days more (+) or fewer (−)"],
      list.map((d, i) => [`${DRIVER_LABEL[d.name] || d.name} (${d.name})`, valueWords(d), d.rate_ratio.toFixed(2),
        `${d.rate_ratio_ci[0].toFixed(2)}–${d.rate_ratio_ci[1].toFixed(2)}`, changes[i].delta.toFixed(1)]));
    const named = changes.map(({ d, delta }) => ({ name: DRIVER_SHORT[d.name] || d.name, short: DRIVER_TINY[d.name], delta }));
    replaceChart("drivers", (box2) => TideCharts.drivers(box2, named));
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
      ["plan", "plan-sentence", "how-checked", "chances", "tercile-bar", "last-season", "freshness", "stale-notice",
        "charts", "downloads"].forEach((name) => { $(name).hidden = true; });
      $("outlook-title").textContent = gauge.name;
      setStatus(`No outlook for ${gauge.name} yet: ${outlookAnswer.detail}.`, true);
      explainFirstUses();
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
    renderHowChecked(outlook.skill);
    setDownloads(outlook);
    explainFirstUses();
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
          const width = Math.max(200, Math.floor(box.clientWidth));
          u.setSize({ width, height: Math.round(Math.min(320, Math.max(220, width * 0.58))) });
        });
        // The reading order changes with the layout (phones put the answer first), and the
        // chooser's facts were just rewritten: the explanations go to the first use a reader
        // now sees.
        if (state.outlook) explainFirstUses();
      }, 150);
    });
  }

  window.tidetallyPage = { chartPng, charts: () => state.charts };

  document.addEventListener("DOMContentLoaded", () => {
    document.querySelectorAll("[data-download]").forEach((b) => {
      b.addEventListener("click", () => downloadChart(b.getAttribute("data-download")));
    });
    redrawOnResize();
    loadGauges();
  });
})();
