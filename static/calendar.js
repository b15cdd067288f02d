// tidetally page: the season's calendar. When the page shows a gauge's outlook it sends a
// `tidetally:outlook` event; this script fetches that season's calendar from the API and
// draws a month grid a planner can print (days and weeks to watch marked by a sign and a
// word, not by colour alone), a plain table of the weeks, and the CSV and .ics downloads.
"use strict";

(function () {
  const MONTHS = ["January", "February", "March", "April", "May", "June", "July", "August",
    "September", "October", "November", "December"];
  const SHORT_MONTHS = ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"];
  const WEEKDAYS = ["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"];
  /** Lower edges of the five shades of a day's chance. */
  const SHADES = [0, 0.05, 0.1, 0.2, 0.4];
  const MARK = "\u25B2"; // the sign of a day to watch
  let token = 0;

  const $ = (id) => document.getElementById(id);
  // The page's own element builder and wording (static/app.js), so both say numbers alike.
  const { el, percent, oneDecimal } = window.tidetallyFormat;
  function plural(n, one, many) { return `${n} ${n === 1 ? one : many}`; }

  /** "2026-12-07" -> a UTC date (no local time zone shifts). */
  function parseDate(text) {
    const [y, m, d] = text.split("-").map(Number);
    return new Date(Date.UTC(y, m - 1, d));
  }
  function iso(date) { return date.toISOString().slice(0, 10); }
  function addDays(date, n) { return new Date(date.getTime() + n * 86400000); }
  function shortDate(date) { return `${date.getUTCDate()} ${SHORT_MONTHS[date.getUTCMonth()]}`; }
  function longDate(date) {
    return `${WEEKDAYS[(date.getUTCDay() + 6) % 7]} ${date.getUTCDate()} ${MONTHS[date.getUTCMonth()]} ${date.getUTCFullYear()}`;
  }
  function shade(chance) {
    let level = 0;
    SHADES.forEach((edge, i) => { if (chance >= edge) level = i; });
    return level;
  }

  /** One month of the season as a Monday-first table, weeks to watch labelled in a column. */
  function monthTable(year, month, byDate, watchWeeks) {
    const first = new Date(Date.UTC(year, month, 1));
    const days = new Date(Date.UTC(year, month + 1, 0)).getUTCDate();
    const table = el("table", { class: "cal-month" });
    table.append(el("caption", { text: `${MONTHS[month]} ${year}` }));
    const head = el("tr", {}, [el("th", { scope: "col", class: "cal-weekcol" }, [el("span", { class: "cal-hide", text: "Week" })])]);
    WEEKDAYS.forEach((w) => head.append(el("th", { scope: "col", abbr: w, text: w.slice(0, 2) })));
    table.append(el("thead", {}, [head]));
    const body = el("tbody");
    const lastOfMonth = new Date(Date.UTC(year, month, days));
    for (let monday = addDays(first, -((first.getUTCDay() + 6) % 7)); monday <= lastOfMonth; monday = addDays(monday, 7)) {
      const watch = watchWeeks.has(iso(monday));
      const row = el("tr", watch ? { class: "cal-watch-week" } : {});
      row.append(el("th", { scope: "row", class: "cal-weekcol" }, watch ? [el("span", { class: "cal-watch-word", text: "watch" })] : []));
      for (let i = 0; i < 7; i += 1) {
        const date = addDays(monday, i);
        const day = date.getUTCMonth() === month ? byDate.get(iso(date)) : undefined;
        if (date.getUTCMonth() !== month) {
          row.append(el("td", { class: "cal-empty" }));
        } else if (!day) {
          row.append(el("td", { class: "cal-outside", text: String(date.getUTCDate()) }));
        } else {
          const label = `${longDate(date)}: ${percent(day.chance)} chance of a flood day${day.watch ? ", a day to watch" : ""}`;
          const cell = el("td", { class: `cal-day cal-shade-${shade(day.chance)}${day.watch ? " cal-watch-day" : ""}`, title: label, "data-date": day.date });
          cell.append(el("span", { class: "cal-num", text: String(date.getUTCDate()) }));
          if (day.watch) cell.append(el("span", { class: "cal-mark", "aria-hidden": "true", text: MARK }));
          cell.append(el("span", { class: "cal-hide", text: `, ${percent(day.chance)}${day.watch ? ", watch" : ""}` }));
          row.append(cell);
        }
      }
      body.append(row);
    }
    table.append(body);
    return table;
  }

  function legend(rule) {
    const items = SHADES.map((edge, i) => {
      const next = SHADES[i + 1];
      let text = `${percent(edge)} to ${percent(next)}`;
      if (i === 0) text = `under ${percent(next)}`;
      if (next === undefined) text = `${percent(edge)} or more`;
      return el("li", {}, [el("span", { class: `cal-swatch cal-shade-${i}`, "aria-hidden": "true" }), document.createTextNode(` ${text}`)]);
    });
    items.push(el("li", {}, [el("span", { class: "cal-mark", "aria-hidden": "true", text: MARK }), document.createTextNode(` day to watch (${percent(rule.min_chance)} or more)`)]));
    items.push(el("li", {}, [el("span", { class: "cal-watch-word", text: "watch" }), document.createTextNode(" week to watch")]));
    return el("ul", { class: "cal-legend", "aria-label": "Key" }, items);
  }

  function weekTable(calendar) {
    const table = el("table", { class: "cal-weeks" });
    table.append(el("thead", {}, [el("tr", {}, ["Week", "Days to watch", "Expected flood days", "Watch"].map((h) => el("th", { scope: "col", text: h })))]));
    const body = el("tbody");
    calendar.weeks.forEach((week) => {
      const first = parseDate(week.days[0].date);
      const last = parseDate(week.days[week.days.length - 1].date);
      const watched = week.days.filter((d) => d.watch).map((d) => `${WEEKDAYS[(parseDate(d.date).getUTCDay() + 6) % 7]} ${shortDate(parseDate(d.date))} (${percent(d.chance)})`);
      body.append(el("tr", week.watch ? { class: "cal-watch-week" } : {}, [
        el("th", { scope: "row", text: `${shortDate(first)} to ${shortDate(last)}` }),
        el("td", { text: watched.length ? watched.join(", ") : "none" }),
        el("td", { "data-raw": String(week.expected_flood_days), text: oneDecimal(week.expected_flood_days) }),
        el("td", { text: week.watch ? "yes" : "no" }),
      ]));
    });
    table.append(body);
    return table;
  }

  function render(calendar, base) {
    const section = $("season-calendar");
    const watchWeeks = new Set(calendar.weeks.filter((w) => w.watch).map((w) => w.monday));
    const byDate = new Map();
    calendar.weeks.forEach((w) => w.days.forEach((d) => byDate.set(d.date, d)));
    const weeks = calendar.weeks.filter((w) => w.watch).length;
    $("calendar-explain").textContent = calendar.watch_days
      ? `${plural(calendar.watch_days, "day", "days")} in ${plural(weeks, "week", "weeks")} ${calendar.watch_days === 1 ? "has" : "have"} a ${percent(calendar.watch_rule.min_chance)} or higher chance of a flood day (marked ${MARK}); darker squares are likelier. A seasonal chance, not a warning.`
      : `No day has a ${percent(calendar.watch_rule.min_chance)} or higher chance of a flood day: flood days here are spread over the season. A seasonal chance, not a warning.`;
    const months = $("calendar-months");
    months.textContent = "";
    const start = parseDate(calendar.first_day);
    const end = parseDate(calendar.last_day);
    for (let y = start.getUTCFullYear(), m = start.getUTCMonth(); y < end.getUTCFullYear() || (y === end.getUTCFullYear() && m <= end.getUTCMonth());) {
      months.append(monthTable(y, m, byDate, watchWeeks));
      m += 1;
      if (m === 12) { m = 0; y += 1; }
    }
    months.append(legend(calendar.watch_rule));
    const table = $("calendar-table");
    table.textContent = "";
    table.append(weekTable(calendar));
    const season = encodeURIComponent(calendar.season);
    const csv = $("dl-calendar-csv");
    csv.href = `${base}/calendar?season=${season}&format=csv`;
    csv.setAttribute("download", `tidetally-calendar-${calendar.gauge}-${calendar.season}.csv`);
    const ics = $("dl-calendar-ics");
    ics.href = `${base}/calendar.ics?season=${season}`;
    ics.setAttribute("download", `tidetally-calendar-${calendar.gauge}-${calendar.season}.ics`);
    section.hidden = false;
    section.dataset.state = "ready";
    section.dataset.gauge = calendar.gauge;
  }

  function hide(state) {
    const section = $("season-calendar");
    if (!section) return;
    section.hidden = true;
    section.dataset.state = state;
  }

  async function show(outlook) {
    const mine = (token += 1);
    const base = `/api/v1/gauges/${encodeURIComponent(outlook.gauge)}`;
    hide("loading");
    let answer = null;
    try {
      const response = await fetch(`${base}/calendar?season=${encodeURIComponent(outlook.season)}`, { headers: { Accept: "application/json" } });
      answer = response.ok ? await response.json() : null;
    } catch (err) {
      answer = null;
    }
    if (mine !== token) return;
    if (!answer) { hide("none"); return; }
    render(answer, base);
  }

  document.addEventListener("tidetally:outlook", (ev) => {
    if (ev.detail && ev.detail.gauge && ev.detail.season) show(ev.detail);
  });
  // A gauge being loaded or without an outlook hides the previous gauge's calendar.
  document.addEventListener("DOMContentLoaded", () => {
    new MutationObserver(() => {
      const s = document.body.dataset.state;
      if (s === "loading" || s === "no-outlook") { token += 1; hide(s); }
    }).observe(document.body, { attributes: true, attributeFilter: ["data-state"] });
  });
})();
