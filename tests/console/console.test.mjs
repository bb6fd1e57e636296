// The bench console in a real browser (Debian's Chromium, headless, driven by playwright-core)
// against the virtual rig: a lot of three magnets entered by key presses (one as a barcode
// scanner types: a burst and Enter), each started, its live curve seen to grow, its verdict read
// from the page and its certificate downloaded and read back; the lot's decision; a Stop pressed
// mid-record turning the heater off (in the run's events); a change from another origin and, on
// a bench network, a request without the token refused. Prints the sample-to-screen latency.
import { chromium } from "playwright-core";
import { spawn, execFileSync } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";

const ROOT = path.resolve(path.dirname(new URL(import.meta.url).pathname), "../..");
const BIN = process.env.REMANENT_BIN || path.join(ROOT, "target/release/remanent");
const CHROMIUM = process.env.CHROMIUM || "/usr/bin/chromium";
const work = fs.mkdtempSync(path.join(os.tmpdir(), "remanent-console-"));
const env = { ...process.env, REMANENT_HISTORY: path.join(work, "history.sqlite") };
const children = [];
let browser;

function cleanup() {
  for (const c of children) { try { c.kill("SIGINT"); } catch { /* gone */ } }
  if (browser) browser.close().catch(() => {});
}
function fail(msg) { console.error("console test FAILED: " + msg); cleanup(); process.exit(1); }
function check(cond, msg) { if (!cond) fail(msg); }
process.on("unhandledRejection", (e) => fail(String(e && e.stack || e)));
const overall = setTimeout(() => fail("the whole test took over 10 minutes"), 600_000);

/** Start `args`, resolve with the first line it prints (its port or its address). */
function start(args) {
  const child = spawn(BIN, args, { cwd: work, env, stdio: ["ignore", "pipe", "pipe"] });
  children.push(child);
  let err = "";
  child.stderr.on("data", (d) => { err += d; });
  return new Promise((resolve, reject) => {
    let out = "";
    const t = setTimeout(() => reject(new Error(`${args[0]} printed nothing in 30 s: ${err}`)), 30_000);
    child.stdout.on("data", (d) => {
      out += d;
      const nl = out.indexOf("\n");
      if (nl >= 0) { clearTimeout(t); resolve({ child, line: out.slice(0, nl).trim() }); }
    });
    child.on("exit", (code) => reject(new Error(`${args[0]} ended (${code}): ${err}`)));
  });
}

async function until(what, f, ms = 120_000) {
  const end = Date.now() + ms;
  for (;;) {
    const v = await f();
    if (v) return v;
    if (Date.now() > end) fail("timed out waiting for " + what);
    await new Promise((r) => setTimeout(r, 100));
  }
}

// the fixture's reference magnet, read on a virtual rig of its own, so Br is judged
const ref = await start(["virtual-rig", "--magnet", "RM-REF-N42SH-D10x5", "--speed", "60"]);
const fixture = path.join(work, "fixture.toml");
execFileSync(BIN, ["reference", "--port", ref.line, "--magnet", "RM-REF-N42SH-D10x5", "--out", fixture],
  { cwd: work, env, stdio: "ignore" });
ref.child.kill("SIGINT");

const runs = path.join(work, "runs");
const con = await start(["console", "--virtual", "RM-N42SH-D10x5", "--virtual-speed", "40",
  "--out", runs, "--reference", fixture]);
const url = con.line;
check(/^http:\/\/127\.0\.0\.1:\d+\/$/.test(url), "the first line is the page's loopback address: " + url);

browser = await chromium.launch({
  executablePath: CHROMIUM,
  args: ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync"],
});
// a tablet-sized screen
const page = await browser.newPage({ viewport: { width: 1024, height: 768 }, acceptDownloads: true });
const outside = [];
page.on("request", (r) => { if (!r.url().startsWith(url)) outside.push(r.url()); });
await page.goto(url);

// the lot, by keyboard alone
await page.focus("#lot-id");
for (const text of ["DEMO-LOT-26-20", "Kestrel Magnet Works (invented)", "PO-5512", "t.nakamura", "RM-N42SH-D10x5"]) {
  await page.keyboard.type(text, { delay: 20 });
  await page.keyboard.press("Tab");
}
await page.keyboard.press("Control+A"); await page.keyboard.type("1"); await page.keyboard.press("Tab");
await page.keyboard.press("Control+A"); await page.keyboard.type("60"); await page.keyboard.press("Enter");
const plan = await until("the lot's plan", async () => {
  const t = await page.textContent("#lot-plan").catch(() => "");
  return t && t.includes("n = 3") ? t : null;
});
console.log("lot plan: " + plan);

const circles = () => page.locator(".rig .chart-bt svg circle").count();
for (const [k, id, scanner] of [[0, "P-001", false], [1, "P-002", true], [2, "P-003", false]]) {
  await page.focus(".part-id");
  // a scanner types the code in one burst and presses Enter; a person types
  await page.keyboard.type(id, { delay: scanner ? 0 : 70 });
  await page.keyboard.press("Enter");
  await until(id + " recording", async () => (await page.textContent(".f-part")) === id);
  const first = await until(id + "'s curve", async () => { const n = await circles(); return n > 20 ? n : 0; });
  await new Promise((r) => setTimeout(r, 1500));
  const later = await circles();
  check(later > first, `${id}: the live curve grows (${first} → ${later} points drawn)`);
  console.log(`${id}: live curve ${first} → ${later} points drawn`);
  const verdict = await until(id + "'s verdict", async () => {
    const v = page.locator(".rig .verdict");
    return (await v.isVisible()) ? v.textContent() : null;
  }, 180_000);
  check(["PASS", "FAIL", "INDETERMINATE"].includes(verdict), `${id}: a verdict, not "${verdict}"`);
  const size = await page.$eval(".rig .verdict", (e) => parseFloat(getComputedStyle(e).fontSize));
  check(size >= 48, `${id}: the verdict is readable from two metres (${size}px)`);
  const [download] = await Promise.all([page.waitForEvent("download"), page.click(".certificate-link")]);
  const pdf = await download.path();
  check(fs.readFileSync(pdf).subarray(0, 5).toString() === "%PDF-", id + ": the certificate is a PDF");
  const text = execFileSync("pdftotext", [pdf, "-"]).toString();
  check(text.includes(id) && text.includes(verdict), `${id}: the certificate names the part and says ${verdict}`);
  console.log(`${id}: ${verdict}, certificate read back (${fs.statSync(pdf).size} bytes)`);
}
const decision = await page.textContent("#lot-decision");
if (process.env.SCREENSHOT) await page.screenshot({ path: process.env.SCREENSHOT, fullPage: true });
console.log("lot decision: " + decision);
check(decision.startsWith("accept: 0 defects in 3 of 3"), "the lot's decision: " + decision);

// Stop mid-record: the heater goes off through the recorder
await page.focus(".part-id");
await page.keyboard.type("P-004");
await page.keyboard.press("Enter");
await until("P-004 heating", async () => ((await page.textContent(".f-heater")) || "").startsWith("heading for"));
await page.focus(".part-stop");
await page.keyboard.press("Enter");
await until("P-004 stopped", async () => (await page.textContent(".rig .verdict")) === "NO VERDICT", 60_000);
const events = fs.readFileSync(path.join(runs, "DEMO-LOT-26-20", "P-004", "events.csv"), "utf8");
check(/,stopped,/.test(events), "the run's events show the stop acknowledged: " + events);
console.log("P-004: stopped mid-record; events.csv: stop acknowledged, heater off");

// a change from another origin is refused, and nothing else left the bench PC
const host = new URL(url).host;
const refused = await fetch(url + "api/rig/0/stop", { method: "POST", headers: { Origin: "http://evil.example", Host: host }, body: "{}" });
check(refused.status === 403, "a stop from another origin: " + refused.status);
check(outside.length === 0, "requests that left the console: " + outside.join(", "));

// latency: each chart refresh measured the newest sample's age on screen
const lat = (await page.evaluate(() => window.consoleLatencies)).slice().sort((a, b) => a - b);
const q = (p) => lat[Math.min(lat.length - 1, Math.floor(p * lat.length))];
console.log(`sample-to-screen latency over ${lat.length} refreshes: median ${q(0.5).toFixed(0)} ms, ` +
  `95th percentile ${q(0.95).toFixed(0)} ms, max ${lat[lat.length - 1].toFixed(0)} ms`);
check(q(0.95) < 1000, "95 % of refreshes within 1 s of the sample's arrival");
con.child.kill("SIGINT");

// on a bench network every request needs the token
const bench = await start(["console", "--virtual", "RM-N42SH-D10x5", "--listen", "127.0.0.1:0", "--out", runs]);
const withToken = new URL(bench.line);
const token = withToken.searchParams.get("token");
check(token && token.length >= 32, "--listen prints the address with a token: " + bench.line);
const bare = withToken.origin + "/api/state";
check((await fetch(bare)).status === 403, "a request without the token is refused");
check((await fetch(bare + "?token=" + token)).status === 200, "a request with the token is served");
const noToken = await fetch(withToken.origin + "/api/rig/0/stop", { method: "POST", headers: { Origin: withToken.origin }, body: "{}" });
check(noToken.status === 403, "a change without the token is refused: " + noToken.status);
console.log("refused: a change from another origin, and requests without the token on --listen");

clearTimeout(overall);
cleanup();
console.log("console test passed");
