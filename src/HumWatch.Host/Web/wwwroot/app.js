// HumWatch live page: the board of rooms (/) and one room (/room/NAME). Plain script, no libraries, nothing loaded from
// elsewhere. Text from the service always goes in through textContent, never as HTML.
"use strict";

const site = { timeZone: "UTC", today: "", silentAfterSeconds: 30 };
const rooms = new Map();          // stream → latest room JSON
const tiles = new Map();          // stream → <li> of the board
let clockOffsetMs = 0;            // service clock minus this browser's clock
const stats = { messages: 0, bytes: 0, snapshotRooms: 0 };
window.humwatchStats = stats;     // read by the tests and the bench

const roomPath = location.pathname.startsWith("/room/") ? decodeURIComponent(location.pathname.slice(6)) : null;

function el(tag, attrs, ...children) {
  const node = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs || {})) {
    if (v !== null && v !== undefined) node.setAttribute(k, v);
  }
  for (const child of children) {
    if (child === null || child === undefined) continue;
    node.append(typeof child === "string" ? document.createTextNode(child) : child);
  }
  return node;
}

function svg(tag, attrs, text) {
  const node = document.createElementNS("http://www.w3.org/2000/svg", tag);
  for (const [k, v] of Object.entries(attrs || {})) node.setAttribute(k, v);
  if (text !== undefined) node.textContent = text;
  return node;
}

function now() { return Date.now() + clockOffsetMs; }

function time(iso) {
  if (!iso) return "";
  const d = new Date(iso);
  const opts = { timeZone: site.timeZone, hour: "2-digit", minute: "2-digit", hourCycle: "h23" };
  const day = new Intl.DateTimeFormat("en-CA", { timeZone: site.timeZone }).format(d);
  const clock = new Intl.DateTimeFormat("en-GB", opts).format(d);
  return day === site.today ? clock : `${day} ${clock}`;
}

function ago(iso) {
  if (!iso) return "never";
  const s = Math.max(0, Math.round((now() - new Date(iso).getTime()) / 1000));
  if (s < 90) return `${s} s ago`;
  if (s < 5400) return `${Math.round(s / 60)} min ago`;
  return `${(s / 3600).toFixed(1)} h ago`;
}

function tierOf(room) {
  if (room.state === "silent") return "silent";
  if (room.state === "waiting") return "waiting";
  if (room.state !== "affected") return "clean";
  return room.severity === "minor" ? "minor" : "high";
}

function stateWord(room) {
  switch (room.state) {
    case "silent": return "silent";
    case "waiting": return "waiting for a frame";
    case "affected": return room.severity || "affected";
    default: return "clean";
  }
}

function uv(value) { return value === null || value === undefined ? "" : `${value.toFixed(value < 10 ? 2 : 1)} µV RMS`; }

function alertFacts(a) {
  const facts = [];
  if (a.frequencyHz !== null && a.frequencyHz !== undefined) facts.push(`${a.frequencyHz.toFixed(2)} Hz`);
  if (a.aliased) facts.push("aliased (folded below half the sampling rate)");
  if (a.amplitudeUvRms !== null && a.amplitudeUvRms !== undefined) facts.push(uv(a.amplitudeUvRms));
  facts.push(`since ${time(a.onsetUtc || a.utc)}`);
  if (a.worstChannels && a.worstChannels.length) facts.push(`on ${a.worstChannels.join(", ")}`);
  if (a.channelShare !== null && a.channelShare !== undefined) facts.push(`${Math.round(a.channelShare * 100)} % of channels`);
  return facts.join(" · ");
}

function hint(a) {
  if (!a.suggestion) return null;
  return el("p", { class: "hint" }, a.suggestion, " ", el("a", { href: "#caution" }, "about hints"));
}

function lastSeen(room) {
  if (room.state === "silent") return room.lastDataUtc ? `no data since ${time(room.lastDataUtc)} (${ago(room.lastDataUtc)})` : "no data since the service started";
  const parts = [`data ${ago(room.lastDataUtc)}`];
  const grid = room.status && room.status.mainsEstimateHz;
  if (grid) parts.push(`grid ${grid.toFixed(2)} Hz`);
  else if (room.status && room.status.mainsHz) parts.push(`grid ${room.status.mainsHz} Hz (${room.status.mainsFrom})`);
  return parts.join(" · ");
}

// ---- the board ----

function renderTile(room) {
  const tier = tierOf(room);
  const worst = room.alerts[0];
  const link = el("a", { class: "room", href: `/room/${encodeURIComponent(room.stream)}`, "data-tier": tier, "data-state": room.state, "data-severity": room.severity },
    el("h2", null, room.stream),
    room.instance ? el("p", { class: "instance" }, `instance ${room.instance}`) : null,
    el("span", { class: "badge" }, stateWord(room)),
    worst ? el("p", { class: "what" }, worst.label, room.alerts.length > 1 ? ` and ${room.alerts.length - 1} more` : "") : null,
    worst ? el("p", { class: "facts" }, alertFacts(worst)) : null,
    worst && room.state !== "silent" ? hint(worst) : null,
    el("p", { class: "seen" }, lastSeen(room)));
  let li = tiles.get(room.stream);
  if (!li) {
    li = el("li", { "data-stream": room.stream });
    tiles.set(room.stream, li);
    const list = document.getElementById("rooms");
    const after = [...tiles.keys()].filter(s => s > room.stream).sort()[0];
    list.insertBefore(li, after ? tiles.get(after) : null);
  }
  li.replaceChildren(link);
}

function renderTally() {
  const counts = { high: 0, minor: 0, silent: 0, clean: 0, waiting: 0 };
  for (const room of rooms.values()) counts[tierOf(room)]++;
  const parts = [`${rooms.size} room${rooms.size === 1 ? "" : "s"}`];
  if (counts.high) parts.push(`${counts.high} marked or severe`);
  if (counts.minor) parts.push(`${counts.minor} minor`);
  if (counts.silent) parts.push(`${counts.silent} silent`);
  if (counts.waiting) parts.push(`${counts.waiting} waiting`);
  parts.push(`${counts.clean} clean`);
  document.getElementById("tally").textContent = parts.join(" · ");
  document.getElementById("empty").hidden = rooms.size > 0 || roomPath !== null;
}

// ---- one room ----

function renderRoomHeader(room) {
  document.getElementById("room-name").textContent = room ? room.stream : roomPath;
  const line = document.getElementById("room-state");
  const list = document.getElementById("room-alerts");
  if (!room) {
    line.textContent = "This room is not on the board (yet).";
    list.replaceChildren();
    return;
  }
  line.replaceChildren(el("span", { class: "badge", "data-tier": tierOf(room), "data-state": room.state, id: "room-badge" }, stateWord(room)), " ", lastSeen(room),
    room.instance ? el("span", { class: "instance", id: "room-instance" }, ` · instance ${room.instance}`) : null);
  list.replaceChildren(...room.alerts.map(a => el("li", { "data-tier": a.severity === "minor" ? "minor" : "high", "data-key": a.key },
    el("p", { class: "what" }, `${a.label} — ${a.severity}`),
    el("p", { class: "facts" }, alertFacts(a)),
    hint(a))));
}

async function getJson(url) {
  const response = await fetch(url, { headers: { Accept: "application/json" } });
  if (!response.ok) throw new Error(`${url}: ${response.status}`);
  return response.json();
}

let spectrumBusy = false;
async function loadSpectrum() {
  if (spectrumBusy) return;
  spectrumBusy = true;
  try {
    const response = await fetch(`/api/v1/rooms/${encodeURIComponent(roomPath)}/spectrum`);
    if (response.status === 404) {
      // Not analysed here yet, or watched by another instance: the answer says which.
      document.getElementById("spectrum-note").textContent = (await response.json()).error;
      return;
    }
    drawSpectrum(await response.json());
  } catch (e) {
    // The next update tries again.
  } finally {
    spectrumBusy = false;
  }
}

function drawSpectrum(s) {
  const plot = document.getElementById("spectrum");
  const W = 1000, H = 380, left = 64, right = 12, top = 70, bottom = 34;
  const psd = s.psdUv2PerHz;
  const fmax = (psd.length - 1) * s.binWidthHz;
  let lo = Infinity, hi = -Infinity;
  for (const p of psd) if (p > 0) { lo = Math.min(lo, p); hi = Math.max(hi, p); }
  if (!isFinite(lo)) return;
  const ylo = Math.floor(Math.log10(lo)), yhi = Math.ceil(Math.log10(hi));
  const x = f => left + (f / fmax) * (W - left - right);
  const y = p => top + (1 - (Math.log10(Math.max(p, lo)) - ylo) / Math.max(1, yhi - ylo)) * (H - top - bottom);
  const nodes = [svg("line", { class: "axis", x1: left, y1: H - bottom, x2: W - right, y2: H - bottom }), svg("line", { class: "axis", x1: left, y1: top, x2: left, y2: H - bottom })];
  for (let e = ylo; e <= yhi; e++) {
    nodes.push(svg("text", { class: "tick", x: left - 6, y: y(10 ** e) + 4, "text-anchor": "end" }, Math.abs(e) <= 4 ? String(+(10 ** e).toPrecision(1)) : `1e${e}`));
  }
  const step = fmax > 400 ? 100 : fmax > 150 ? 50 : 25;
  for (let f = 0; f <= fmax; f += step) nodes.push(svg("text", { class: "tick", x: x(f), y: H - bottom + 18, "text-anchor": "middle" }, String(f)));
  nodes.push(svg("text", { class: "tick", x: W - right, y: H - 4, "text-anchor": "end" }, "frequency, Hz"));
  nodes.push(svg("text", { class: "tick", x: 4, y: top - 52 }, "power density, µV²/Hz (log scale)"));
  let d = "";
  psd.forEach((p, k) => { d += `${k ? "L" : "M"}${x(k * s.binWidthHz).toFixed(1)},${y(p).toFixed(1)}`; });
  nodes.push(svg("path", { class: "trace", d }));
  // Flagged lines last, so their labels sit on top; labels alternate between two rows where they would collide.
  const lines = [...s.lines].sort((a, b) => (a.flagged - b.flagged) || (a.frequencyHz - b.frequencyHz));
  const placed = [];
  for (const line of lines) {
    const lx = x(line.frequencyHz);
    const cls = line.flagged ? "flagged" : "";
    nodes.push(svg("line", { class: `mark ${cls}`, x1: lx, x2: lx, y1: top - 8, y2: H - bottom }));
    let row = 0;
    while (placed.some(p => p.row === row && Math.abs(p.x - lx) < 120)) row++;
    placed.push({ x: lx, row });
    const anchor = lx > W - 150 ? "end" : "start";
    nodes.push(svg("text", { class: `line-label ${cls}`, x: lx + (anchor === "start" ? 4 : -4), y: top - 12 - (row % 3) * 17, "text-anchor": anchor, "data-key": line.key }, line.label));
  }
  plot.replaceChildren(...nodes);
  document.getElementById("spectrum-note").textContent =
    `Mean over the analysed channels, frame ending ${time(s.utc)}. Lines marked in yellow have an active alert; dashed ones are present but below the alert rules.`;
}

async function loadTimeline() {
  try {
    const day = await getJson(`/api/v1/summaries/${site.today}/${encodeURIComponent(roomPath)}`);
    const rows = day.timeline.rows;
    const box = document.getElementById("timeline");
    if (!rows.length) {
      box.replaceChildren(el("p", { class: "note" }, `Nothing affected today so far (${day.hoursMonitored} h monitored).`));
      return;
    }
    const head = el("tr", null, el("th", null, ""), ...day.timeline.hourStartsLocal.map(h => el("th", { scope: "col" }, h.slice(11, 13))));
    const body = rows.map(r => el("tr", null, el("th", { scope: "row" }, r.label), ...r.minutes.map(m => {
      const cell = el("td", { title: `${r.label}: ${m} min` });
      // One hue from dark to light: ordered by lightness, so it reads without colour vision.
      if (m > 0) cell.style.background = `hsl(202 100% ${Math.round(22 + 58 * Math.min(1, m / 60))}%)`;
      return cell;
    })));
    box.replaceChildren(el("table", null, el("thead", null, head), el("tbody", null, ...body)));
  } catch (e) {
    // Shown again at the next refresh.
  }
}

async function loadRecent() {
  try {
    const since = new Date(now() - 7 * 86400000).toISOString();
    const data = await getJson(`/api/v1/alerts?stream=${encodeURIComponent(roomPath)}&since=${since}&limit=50`);
    document.getElementById("recent").replaceChildren(...data.alerts.map(a => el("tr", null,
      el("td", null, time(a.utc)), el("td", null, a.event), el("td", null, a.label), el("td", null, a.event === "cleared" ? a.peakSeverity || "" : a.severity),
      el("td", null, a.event === "cleared" ? (a.peakAmplitudeUvRms ?? "") + "" : (a.amplitudeUvRms ?? "") + ""),
      el("td", null, a.event === "cleared" ? `${a.reason}, ${Math.round(a.durationSeconds || 0)} s` : a.suggestion || ""))));
  } catch (e) {
    // Shown again at the next refresh.
  }
}

async function loadSheets() {
  try {
    const data = await getJson(`/api/v1/summaries?stream=${encodeURIComponent(roomPath)}`);
    const list = document.getElementById("sheets");
    if (!data.summaries.length) {
      list.replaceChildren(el("li", null, "None yet: a day sheet is written after each local midnight."));
      return;
    }
    list.replaceChildren(...data.summaries.map(s => el("li", null, `${s.day}: ${s.verdict ?? "?"} `,
      el("a", { href: s.files.page }, "sheet"), " · ", s.files.spectrum ? el("a", { href: s.files.spectrum }, "spectrum") : null, s.files.spectrum ? " · " : null,
      s.files.timeline ? el("a", { href: s.files.timeline }, "timeline") : null, s.files.timeline ? " · " : null,
      s.files.mains ? el("a", { href: s.files.mains }, "mains") : null, s.files.mains ? " · " : null, el("a", { href: s.files.summary }, "JSON"))));
  } catch (e) {
    // Shown again at the next refresh.
  }
}

// ---- live updates ----

function apply(batch) {
  clockOffsetMs = new Date(batch.utc).getTime() - Date.now();
  if (batch.full) rooms.clear();
  for (const room of batch.rooms) rooms.set(room.stream, room);
  for (const stream of batch.removed) rooms.delete(stream);
  if (roomPath === null) {
    if (batch.full) {
      for (const [stream, li] of tiles) if (!rooms.has(stream)) { li.remove(); tiles.delete(stream); }
      for (const room of rooms.values()) renderTile(room);
    } else {
      for (const room of batch.rooms) renderTile(room);
      for (const stream of batch.removed) { tiles.get(stream)?.remove(); tiles.delete(stream); }
    }
    renderTally();
  } else {
    renderTally();
    if (batch.full || batch.rooms.some(r => r.stream === roomPath)) {
      renderRoomHeader(rooms.get(roomPath));
      loadSpectrum();
    }
  }
}

function connect() {
  const link = document.getElementById("link");
  const source = new EventSource("/api/v1/events");
  const count = e => { stats.messages++; stats.bytes += e.data.length; };
  source.addEventListener("open", () => { link.dataset.state = "live"; link.textContent = "live"; });
  source.addEventListener("error", () => { link.dataset.state = "lost"; link.textContent = "reconnecting…"; });
  source.addEventListener("rooms", e => {
    count(e);
    const batch = JSON.parse(e.data);
    apply(batch);
    if (batch.full && !stats.firstRender) {
      stats.firstRender = performance.now();
      stats.snapshotRooms = batch.rooms.length;
      performance.mark("humwatch-rooms-rendered");
    }
  });
  for (const kind of ["alert", "clear", "summary"]) {
    source.addEventListener(kind, e => {
      count(e);
      if (roomPath !== null && JSON.parse(e.data).stream === roomPath) {
        loadRecent();
        if (kind === "summary") loadSheets();
      }
    });
  }
}

async function start() {
  try {
    Object.assign(site, await getJson("/api/v1/site"));
  } catch (e) {
    // The site's zone stays UTC; the rest works the same.
  }
  document.getElementById(roomPath === null ? "board" : "room").hidden = false;
  if (roomPath !== null) {
    document.title = `${roomPath} — HumWatch`;
    renderRoomHeader(null);
    loadRecent();
    loadSheets();
    loadTimeline();
    setInterval(loadSpectrum, 5000);
    setInterval(loadTimeline, 60000);
  }
  connect();
  // Ages ("12 s ago") and silence move on without a message; redraw the texts that show them.
  setInterval(() => {
    if (roomPath === null) for (const room of rooms.values()) renderTile(room);
    else renderRoomHeader(rooms.get(roomPath));
  }, 5000);
}

start();
