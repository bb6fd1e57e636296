// The bench console's page: the live state arrives as server-sent events and is placed as
// text; the charts are SVG drawn by the tool itself and fetched when new samples arrived. Every
// change goes by POST with the access token (when the console needs one).
"use strict";

const token = new URLSearchParams(location.search).get("token") || "";
const query = token ? "?token=" + encodeURIComponent(token) : "";
const rigCards = [];
const drawn = [];            // per rig: samples in the charts shown
const fetching = [];         // per rig: a chart fetch is under way
window.consoleLatencies = []; // sample-to-screen, ms, one per chart refresh

async function post(path, body) {
  const r = await fetch(path, {
    method: "POST",
    headers: { "Content-Type": "application/json", "X-Console-Token": token },
    body: JSON.stringify(body || {}),
  });
  const text = await r.text();
  if (!r.ok) throw new Error(text);
  return text;
}

function $(root, sel) { return root.querySelector(sel); }
function setText(el, text) { if (el.textContent !== text) el.textContent = text; }
function setList(el, items) {
  const html = items.map(() => "<li></li>").join("");
  if (el.children.length !== items.length) el.innerHTML = html;
  items.forEach((t, i) => setText(el.children[i], t));
}

document.getElementById("lot-form").addEventListener("submit", async (e) => {
  e.preventDefault();
  const f = e.target;
  const size = f.lot_size.value.trim();
  const body = {
    lot: f.lot.value, supplier: f.supplier.value, order: f.order.value,
    operator: f.operator.value, magnet: f.magnet.value,
    aql_pct: Number(f.aql_pct.value.replace("%", "")), rql_pct: Number(f.rql_pct.value.replace("%", "")),
    lot_size: size ? Number(size) : null,
  };
  const err = document.getElementById("lot-error");
  try {
    await post("/api/lot", body);
    setText(err, "");
    const first = document.querySelector(".part-id");
    if (first) first.focus();
  } catch (x) { setText(err, x.message); }
});

function card(i, rig) {
  if (rigCards[i]) return rigCards[i];
  const node = document.getElementById("rig-template").content.firstElementChild.cloneNode(true);
  node.dataset.rig = i;
  setText($(node, ".rig-name"), "Rig " + (i + 1) + " — " + rig.rig);
  const form = $(node, ".part-form");
  form.addEventListener("submit", async (e) => {
    e.preventDefault();
    const id = $(node, ".part-id");
    try {
      await post("/api/rig/" + i + "/start", { part: id.value.trim(), profile: $(node, ".part-profile").value });
      setText($(node, ".rig-error"), "");
      id.value = "";
    } catch (x) { setText($(node, ".rig-error"), x.message); }
  });
  const stop = async () => {
    try { await post("/api/rig/" + i + "/stop"); } catch (x) { setText($(node, ".rig-error"), x.message); }
  };
  $(node, ".part-stop").addEventListener("click", stop);
  // and one always in view, whatever is scrolled
  const always = document.createElement("button");
  always.type = "button";
  always.className = "stop-always";
  always.textContent = "Stop heater — rig " + (i + 1);
  always.addEventListener("click", stop);
  document.getElementById("stops").appendChild(always);
  document.getElementById("rigs").appendChild(node);
  rigCards[i] = node;
  drawn[i] = -1;
  return node;
}

async function refreshCharts(i, node) {
  if (fetching[i]) return;
  fetching[i] = true;
  try {
    for (const [name, sel] of [["bt.svg", ".chart-bt"], ["tt.svg", ".chart-tt"]]) {
      const r = await fetch("/rig/" + i + "/" + name + query);
      if (!r.ok) continue;
      const svg = await r.text();
      $(node, sel).innerHTML = svg;
      const last = Number(r.headers.get("X-Last-Received-Ms"));
      if (name === "bt.svg") {
        drawn[i] = Number(r.headers.get("X-Drawn-Samples"));
        if (last > 0) {
          const ms = Date.now() - last;
          window.consoleLatencies.push(ms);
          const l = window.consoleLatencies;
          setText($(node, ".latency"), "sample to screen: " + ms.toFixed(0) + " ms (max " + Math.max(...l).toFixed(0) + " ms)");
        }
      }
    }
  } finally { fetching[i] = false; }
}

function showRig(rig, lot) {
  const node = card(rig.index, rig);
  const s = rig.status || {};
  setText($(node, ".f-part"), rig.part || "—");
  setText($(node, ".f-temp"), s.temp || "—");
  setText($(node, ".f-flux"), s.flux || "—");
  setText($(node, ".f-heater"), s.heater ? s.heater + " (" + s.duty + ")" : "—");
  setText($(node, ".f-state"), (s.state || rig.phase) + (s.ramp ? ", " + s.ramp : ""));
  setText($(node, ".f-left"), rig.phase === "recording" ? (s.left || "—") : "—");
  setText($(node, ".f-samples"), String(rig.samples));
  setList($(node, ".plan"), rig.plan);
  setList($(node, ".notices"), rig.notices.slice(-30));
  const fault = node.querySelector(".fault-banner");
  if (s.fault) {
    if (!fault) { const p = document.createElement("p"); p.className = "fault fault-banner"; p.setAttribute("role", "alert"); $(node, ".figures").before(p); }
    setText(node.querySelector(".fault-banner"), "FAULT: " + s.fault + " — heater off");
  } else if (fault) { fault.remove(); }
  const v = $(node, ".verdict");
  if (rig.outcome) {
    const word = rig.outcome.verdict || "NO VERDICT";
    v.hidden = false;
    v.className = "verdict " + (rig.outcome.verdict ? word.toLowerCase() : "none");
    setText(v, word);
    setList($(node, ".reasons"), rig.outcome.reasons);
    const k = lot ? lot.parts.length - 1 : -1;
    const cert = $(node, ".certificate");
    if (rig.outcome.certificate && k >= 0) {
      const href = "/lot/part/" + k + "/certificate.pdf" + query;
      if (!cert.firstChild || cert.firstChild.getAttribute("href") !== href) {
        cert.innerHTML = "";
        const a = document.createElement("a");
        a.href = href; a.download = rig.part + "-certificate.pdf"; a.className = "certificate-link";
        a.textContent = "Certificate " + rig.outcome.certificate + " (PDF: open or print)";
        cert.appendChild(a);
      }
    } else { setText(cert, ""); }
  } else {
    v.hidden = true;
    setList($(node, ".reasons"), []);
    setText($(node, ".certificate"), "");
  }
  if (rig.samples !== drawn[rig.index]) refreshCharts(rig.index, node);
}

function showLot(lot) {
  const form = document.getElementById("lot-form");
  const summary = document.getElementById("lot-summary");
  if (!lot) { summary.hidden = true; return; }
  summary.hidden = false;
  setText(document.getElementById("lot-title"), lot.lot + " from " + lot.supplier + " — " + lot.magnet + " (" + lot.grade + ")");
  setText(document.getElementById("lot-plan"), "sample n = " + lot.n + ", accept with at most c = " + lot.c + " defects (AQL " + lot.aql_pct + " %, RQL " + lot.rql_pct + " %)");
  setList(document.getElementById("lot-test"), lot.test);
  const d = document.getElementById("lot-decision");
  d.className = "decision " + lot.decision;
  setText(d, lot.decision_words);
  const body = $(document.getElementById("lot-parts"), "tbody");
  if (body.children.length !== lot.parts.length) {
    body.innerHTML = lot.parts.map(() => "<tr><td></td><td></td><td></td></tr>").join("");
  }
  lot.parts.forEach((p, k) => {
    const cells = body.children[k].children;
    setText(cells[0], p.id);
    setText(cells[1], p.verdict ? p.verdict.toUpperCase() : "no verdict");
    setText(cells[2], p.note);
  });
  form.querySelector("button").textContent = "Start a new lot";
}

function connect() {
  const es = new EventSource("/events" + query);
  es.onopen = () => setText(document.getElementById("link"), "live");
  es.onerror = () => setText(document.getElementById("link"), "connection lost: retrying…");
  es.onmessage = (e) => {
    const state = JSON.parse(e.data);
    showLot(state.lot);
    state.rigs.forEach((r) => showRig(r, state.lot));
  };
}
connect();
