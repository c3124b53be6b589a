// The steamcell Excel add-in's functions in a real browser (headless Chromium) against the real
// steamcell server: the page comes from another origin than the server (a small static server
// here), so every call crosses CORS with its preflight; only the Office host object is stubbed
// (office-stub.js), never the network.
//
// Usage: STEAMCELL_BIN=target/debug/steamcell node clients/excel/test/browser_test.mjs [--bench]
// (after `npm install` in clients/excel/test; Chromium from Debian's `chromium` package, or set
// CHROMIUM). Checks:
// - every case of clients/sheet-cases.json: values against the server's JSON-RPC answers and
//   IAPWS R7-97(2012) Table 5; each bad input an error value in its own cell with its message,
//   and SC.WHY giving the same message;
// - batching: 1,000 cells of one recalculation (mixed input pairs) reach the server in at most
//   a handful of HTTP requests (counted by the browser), every value equal to the server's;
// - CORS: allowed origin answered (preflight included), another origin refused (#N/A naming
//   --allow-origin), the private-network preflight header, a token, the files served by the
//   server itself (same origin, no CORS).
// --bench also times 100,000 rows of SC.COLUMN (a figure, not a check).
// Prints "N passed, N failed"; exit status 1 on any failure.

import { spawn } from "node:child_process";
import { readFileSync, existsSync } from "node:fs";
import http from "node:http";
import { dirname, extname, join, normalize, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { chromium } from "playwright-core";

const HERE = dirname(fileURLToPath(import.meta.url));
const EXCEL = resolve(HERE, "..");
const CLIENTS = resolve(EXCEL, "..");
const REPO = resolve(CLIENTS, "..");
const BIN = resolve(process.env.STEAMCELL_BIN || join(REPO, "target", "debug", "steamcell"));
const CHROMIUM = process.env.CHROMIUM || "/usr/bin/chromium";
const SITE = join(REPO, "examples", "site", "site.json");
const ALL_CASES = JSON.parse(readFileSync(join(CLIENTS, "sheet-cases.json"), "utf8"));
const CASES = ALL_CASES.cases;
const BENCH = process.argv.includes("--bench");

let passed = 0;
let failed = 0;
function check(name, ok, detail = "") {
  if (ok) passed++;
  else failed++;
  console.log((ok ? "PASS " : "FAIL ") + name + (!ok && detail ? ": " + detail : ""));
  return ok;
}
const closeTo = (a, b, rel = 1e-12, abs = 0) =>
  typeof a === "number" && typeof b === "number" && Math.abs(a - b) <= Math.max(rel * Math.abs(b), abs);

// ------------------------------------------------------------------ the page's own origin

const TYPES = { ".html": "text/html", ".js": "text/javascript", ".json": "application/json", ".png": "image/png", ".xml": "application/xml" };

function pageServer() {
  const server = http.createServer((req, res) => {
    const path = normalize(decodeURIComponent(new URL(req.url, "http://x").pathname));
    const file = path.startsWith("/test/") ? join(HERE, path.slice(6)) : join(EXCEL, path);
    if (!file.startsWith(EXCEL) || file.includes("node_modules") || !existsSync(file)) {
      res.writeHead(404).end("not found");
      return;
    }
    res.writeHead(200, { "Content-Type": TYPES[extname(file)] || "application/octet-stream" });
    res.end(readFileSync(file));
  });
  return new Promise((ok) => server.listen(0, "127.0.0.1", () => ok(server)));
}

// ------------------------------------------------------------------ steamcell

function startSteamcell(args, env = {}) {
  const clean = Object.fromEntries(Object.entries(process.env).filter(([k]) => !k.startsWith("STEAMCELL_")));
  const proc = spawn(BIN, ["serve", "--listen", "127.0.0.1:0", ...args], { env: { ...clean, ...env }, stdio: ["ignore", "pipe", "ignore"] });
  return new Promise((ok, fail) => {
    let out = "";
    proc.stdout.on("data", (d) => {
      out += d;
      const m = /listening on (http:\/\/\S+)/.exec(out);
      if (m) ok({ url: m[1], proc, token: env.STEAMCELL_TOKEN });
    });
    proc.on("exit", (code) => fail(new Error("steamcell exited " + code)));
  });
}

async function rpc(server, method, params) {
  const headers = { "Content-Type": "application/json" };
  if (server.token) headers.Authorization = "Bearer " + server.token;
  const r = await fetch(server.url, { method: "POST", headers, body: JSON.stringify({ jsonrpc: "2.0", id: 1, method, params: params || {} }) });
  const a = await r.json();
  if (a.error) throw new Error(a.error.message);
  return a.result;
}

async function rpcBatch(server, calls) {
  const out = [];
  for (let k = 0; k < calls.length; k += 1000) {
    const chunk = calls.slice(k, k + 1000).map((c, i) => ({ jsonrpc: "2.0", id: k + i, method: c[0], params: c[1] }));
    const r = await fetch(server.url, { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(chunk) });
    const answers = await r.json();
    const byId = new Map(answers.map((a) => [a.id, a]));
    chunk.forEach((c) => out.push(byId.get(c.id)));
  }
  return out;
}

function rawRequest(url, method, headers) {
  const u = new URL(url);
  return new Promise((ok, fail) => {
    const req = http.request({ host: u.hostname, port: u.port, path: u.pathname, method, headers }, (res) => {
      let body = "";
      res.on("data", (d) => (body += d));
      res.on("end", () => ok({ status: res.statusCode, headers: res.headers, body }));
    });
    req.on("error", fail);
    req.end();
  });
}

const pick = (result, path) => path.split(".").reduce((at, p) => (Array.isArray(at) ? at[Number(p)] : at[p]), result);

async function siteValue(server, changes, quantity) {
  const net = JSON.parse(readFileSync(SITE, "utf8"));
  const params = { network: net };
  for (const [path, value] of Object.entries(changes)) {
    if (path === "unit") {
      // the unit of the answer: a units key of its field name
      params.units = { [quantity.split(".").pop()]: value };
      continue;
    }
    const parts = path.split(".");
    let at = net;
    parts.slice(0, -1).forEach((p) => (at = at[p]));
    at[parts[parts.length - 1]] = value;
  }
  const res = await rpc(server, "balance.solve", params);
  return pick(res, quantity.includes(".") ? quantity : "totals." + quantity);
}

// ------------------------------------------------------------------ in the page

// Calls functions as Excel does: arguments shaped by each parameter's kind (matrix parameters get
// 2-D arrays, repeating ones an array of them, an omitted optional one null, Excel's invocation
// object last), all calls of one "recalculation" started in the same tick.
const PAGE_HELPERS = () => {
  const shape = (a, matrix) => {
    if (a && typeof a === "object" && !Array.isArray(a)) {
      if (a.empty) return matrix ? [[null]] : null;
      if (a.range) return a.range.map((r) => r.map((v) => (v && typeof v === "object" ? "" : v)));
      if ("literal" in a) return matrix ? [[a.literal]] : a.literal;
    }
    return matrix ? [[a]] : a;
  };
  window.excelArgs = (name, args) => {
    const f = window.STEAMCELL_FUNCTIONS.find((x) => x.name === name);
    const out = [];
    f.params.forEach(([_n, kind], i) => {
      if (kind === "pairs" || kind === "args") out.push(args.slice(i).map((a) => shape(a, true)));
      else if (i >= args.length) out.push(null);
      else out.push(shape(args[i], kind === "value" || kind === "values"));
    });
    out.push({ address: "Sheet1!A1" });
    return out;
  };
  const settle = (v) => {
    if (v instanceof window.CustomFunctions.Error) return { error: v.code, message: v.message };
    if (Array.isArray(v)) return v.map(settle);
    return v;
  };
  window.recalc = async (calls) => {
    const stats = window.SteamcellFunctions.stats;
    const before = stats.requests;
    const started = performance.now();
    const running = calls.map(([name, args]) => window.CustomFunctions.associated[name](...window.excelArgs(name, args)));
    const done = await Promise.allSettled(running);
    return {
      requests: stats.requests - before,
      ms: performance.now() - started,
      values: done.map((r) => (r.status === "fulfilled" ? settle(r.value) : settle(r.reason))),
    };
  };
};

async function openHarness(context, origin, server, token = "", digest = "") {
  const page = await context.newPage();
  await page.goto(`${origin}/test/harness.html?server=${encodeURIComponent(server.url)}&token=${encodeURIComponent(token)}&digest=${encodeURIComponent(digest)}`);
  await page.evaluate(PAGE_HELPERS);
  return page;
}

// ------------------------------------------------------------------ checks

async function checkCases(page, server) {
  const calls = [];
  for (const c of CASES) {
    calls.push([c.fn, c.args]);
    calls.push(["WHY", [c.fn, ...c.args]]);
  }
  const { values } = await page.evaluate((calls) => window.recalc(calls), calls);
  for (let k = 0; k < CASES.length; k++) {
    const c = CASES[k];
    const got = values[2 * k];
    const why = values[2 * k + 1];
    const name = `case '${c.name}'`;
    if (c.rpc) {
      const want = pick(await rpc(server, c.rpc.method, c.rpc.params), c.rpc.path);
      check(`${name} = ${c.rpc.method} ${c.rpc.path}`, closeTo(got, want), JSON.stringify(got) + " vs " + want);
      check(`${name}: SC.WHY is empty`, why === "", JSON.stringify(why));
    } else if (c.number !== undefined) {
      check(`${name} = ${c.number} (${c.source})`, closeTo(got, c.number, 0, c.abs), JSON.stringify(got));
    } else if (c.site) {
      const want = await siteValue(server, c.site.changes, c.site.quantity);
      check(`${name} = balance.solve`, closeTo(got, want), JSON.stringify(got) + " vs " + want);
    } else if (c.text !== undefined) {
      check(`${name} says '${c.text}'`, typeof got === "string" && got.includes(c.text), JSON.stringify(got));
    } else if (c.error) {
      check(`${name}: #VALUE! in its cell`, got && got.error === "#VALUE!", JSON.stringify(got));
      check(`${name}: the error's message says '${c.error}'`, got && typeof got.message === "string" && got.message.includes(c.error), JSON.stringify(got));
      check(`${name}: SC.WHY gives the same message`, got && why === got.message, JSON.stringify(why));
    } else if (c.column) {
      let firstError = null;
      for (let i = 0; i < c.column.length; i++) {
        const e = c.column[i];
        const v = Array.isArray(got) ? got[i][0] : got;
        if (e.rpc) {
          const want = pick(await rpc(server, e.rpc.method, e.rpc.params), e.rpc.path);
          check(`${name} row ${i + 1} = ${e.rpc.method} ${e.rpc.path}`, closeTo(v, want), JSON.stringify(v) + " vs " + want);
        } else {
          check(`${name} row ${i + 1}: #VALUE! in its own cell only, saying '${e.error}'`,
            v && v.error === "#VALUE!" && v.message.includes(e.error), JSON.stringify(v));
          if (firstError === null) firstError = [i, e.error];
        }
      }
      if (firstError) {
        check(`${name}: SC.WHY names row ${firstError[0] + 1}`, typeof why === "string" && why.startsWith(`row ${firstError[0] + 1}: `) && why.includes(firstError[1]), JSON.stringify(why));
      }
    }
  }
}

async function checkArgumentRules(page) {
  // The same options texts and name/value pairs the Calc add-in's unit test takes.
  const out = await page.evaluate(([options, pairs]) => {
    const api = window.SteamcellFunctions;
    const run = (f) => { try { return { value: f() }; } catch (e) { return { error: e.message }; } };
    return {
      options: options.map((c) => run(() => api.parseOptions(c.text))),
      pairs: pairs.map((c) => run(() => api.pairsToParams(c.args))),
    };
  }, [ALL_CASES.options, ALL_CASES.pairs]);
  const same = (a, b) => JSON.stringify(sortKeys(a)) === JSON.stringify(sortKeys(b));
  ALL_CASES.options.forEach((c, i) => {
    const r = out.options[i];
    if (c.error) check(`options ${JSON.stringify(c.text)}: refused, '${c.error}'`, r.error && r.error.includes(c.error), JSON.stringify(r));
    else check(`options ${JSON.stringify(c.text)}`, r.value && same(r.value, c.params), JSON.stringify(r));
  });
  ALL_CASES.pairs.forEach((c, i) => {
    const r = out.pairs[i];
    if (c.error) check(`pairs ${JSON.stringify(c.args)}: refused, '${c.error}'`, r.error && r.error.includes(c.error), JSON.stringify(r));
    else check(`pairs ${JSON.stringify(c.args)}`, r.value && same(r.value, c.params), JSON.stringify(r));
  });
}

function sortKeys(v) {
  if (Array.isArray(v)) return v.map(sortKeys);
  if (v && typeof v === "object") return Object.fromEntries(Object.keys(v).sort().map((k) => [k, sortKeys(v[k])]));
  return v;
}

function mixedCalls(n) {
  // One sheet of property cells, four input pairs in turn (engineering preset: MPa, degC, kJ/kg).
  const calls = [];
  const rpcs = [];
  for (let i = 0; i < n; i++) {
    let q, given;
    switch (i % 4) {
      case 0: q = "h"; given = { p: 1 + (i % 37) * 0.25, T: 200 + (i % 61) * 5 + 0.5 }; break;
      case 1: q = "T"; given = { p: 0.5 + (i % 23) * 0.2, h: 1000 + (i % 97) * 20 }; break;
      case 2: q = "v"; given = { p: 0.2 + (i % 29) * 0.3, s: 2 + (i % 41) * 0.12 }; break;
      default: q = "s"; given = { T: 50 + (i % 31) * 8, x: (i % 11) / 10 }; break;
    }
    const [n1, n2] = Object.keys(given);
    calls.push(["PROP", [q, n1, given[n1], n2, given[n2]]]);
    rpcs.push(["water.state", { given }, q]);
  }
  return { calls, rpcs };
}

async function checkBatching(page, server, counted) {
  const { calls, rpcs } = mixedCalls(1000);
  counted.length = 0;
  const r = await page.evaluate((calls) => window.recalc(calls), calls);
  const posts = counted.filter((x) => x.method === "POST").length;
  const preflights = counted.filter((x) => x.method === "OPTIONS").length;
  console.log(`  1,000 SC.PROP cells, one recalculation: ${counted.length} HTTP requests seen by the browser (${posts} POST, ${preflights} preflight OPTIONS), ${r.requests} sent by the add-in, ${r.ms.toFixed(0)} ms`);
  check("batching: 1,000 cells of one recalculation make at most 3 HTTP requests", posts >= 1 && counted.length <= 3 && r.requests <= 3, `${counted.length} requests`);
  const answers = await rpcBatch(server, rpcs.map(([m, p]) => [m, p]));
  let same = 0;
  const bad = [];
  answers.forEach((a, i) => {
    const want = a.result && a.result[rpcs[i][2]];
    if (closeTo(r.values[i], want)) same++;
    else if (bad.length < 3) bad.push(`${i}: ${JSON.stringify(r.values[i])} vs ${want}`);
  });
  check("batching: every one of the 1,000 values equals the server's water.state", same === 1000, bad.join("; "));
  counted.length = 0;
  const again = await page.evaluate((calls) => window.recalc(calls), calls);
  check("a recalculation with unchanged inputs is answered without a request", again.requests === 0 && counted.length === 0, `${again.requests}`);
}

async function checkCors(context, origin, server) {
  // Preflight as a browser sends it for a page on a public address calling a private one.
  const pf = await rawRequest(server.url + "/", "OPTIONS", {
    Origin: origin, "Access-Control-Request-Method": "POST", "Access-Control-Request-Headers": "content-type",
    "Access-Control-Request-Private-Network": "true",
  });
  check("preflight of the allowed origin: 204 with its CORS answer", pf.status === 204 && pf.headers["access-control-allow-origin"] === origin, JSON.stringify(pf.headers));
  check("preflight asking for private-network access gets Access-Control-Allow-Private-Network: true", pf.headers["access-control-allow-private-network"] === "true", JSON.stringify(pf.headers));
  const other = await rawRequest(server.url + "/", "OPTIONS", { Origin: "http://elsewhere.example", "Access-Control-Request-Method": "POST", "Access-Control-Request-Private-Network": "true" });
  check("preflight of another origin: 403, no CORS or private-network answer", other.status === 403 && !other.headers["access-control-allow-origin"] && !other.headers["access-control-allow-private-network"], JSON.stringify(other));

  // A server that does not allow this page's origin: the browser refuses the answer.
  const closed = await startSteamcell([]);
  try {
    const page = await openHarness(context, origin, closed);
    const { values } = await page.evaluate(() => window.recalc([["PROP", ["h", "p", "3 MPa", "T", "300 K"]]]));
    const v = values[0];
    check("origin not allowed: #N/A", v && v.error === "#N/A", JSON.stringify(v));
    check("origin not allowed: the message names --allow-origin with this page's origin", v && v.message.includes(`--allow-origin ${origin}`), JSON.stringify(v));
    await page.close();
  } finally {
    closed.proc.kill();
  }

  // A server with a token.
  const token = "t-" + Math.random().toString(16).slice(2);
  const team = await startSteamcell(["--allow-origin", origin], { STEAMCELL_TOKEN: token });
  try {
    let page = await openHarness(context, origin, team, token);
    let { values } = await page.evaluate(() => window.recalc([["PROP", ["h", "p", "3 MPa", "T", "300 K"]]]));
    check("token: the right one gets Table 5 h", closeTo(values[0], 115.331273, 0, 5e-7), JSON.stringify(values[0]));
    await page.close();
    page = await openHarness(context, origin, team, "wrong");
    ({ values } = await page.evaluate(() => window.recalc([["PROP", ["h", "p", "3 MPa", "T", "300 K"]]])));
    check("token: a wrong one gives #N/A saying so", values[0] && values[0].error === "#N/A" && values[0].message.includes("refused the token"), JSON.stringify(values[0]));
    await page.close();
    // A pinned validation digest: the server's own computes, another refuses every cell.
    const digest = (await rpc(team, "server.info", {})).digest;
    page = await openHarness(context, origin, team, token, digest);
    ({ values } = await page.evaluate(() => window.recalc([["PROP", ["h", "p", "3 MPa", "T", "300 K"]], ["SAT", ["T", "p", "1 bar"]]])));
    check("pinned to the server's digest: Table 5 h", closeTo(values[0], 115.331273, 0, 5e-7), JSON.stringify(values[0]));
    await page.close();
    const wrong = "if97-0000000000000000-259of259";
    page = await openHarness(context, origin, team, token, wrong);
    ({ values } = await page.evaluate(() => window.recalc([["PROP", ["h", "p", "3 MPa", "T", "300 K"]], ["SITE", ["mill", "net_power"]]])));
    check("pinned to another digest: #N/A in every cell, the message naming both digests",
      values.every((v) => v && v.error === "#N/A" && v.message.includes(wrong) && v.message.includes(digest)), JSON.stringify(values));
    await page.close();
  } finally {
    team.proc.kill();
  }

  // Unreachable server.
  const page = await openHarness(context, origin, { url: "http://127.0.0.1:9" });
  const { values } = await page.evaluate(() => window.recalc([["PROP", ["h", "p", "3 MPa", "T", "300 K"]]]));
  check("unreachable server: #N/A saying to start steamcell serve", values[0] && values[0].error === "#N/A" && values[0].message.includes("steamcell serve"), JSON.stringify(values[0]));
  await page.close();
}

async function checkServedFiles(context, server) {
  const page = await context.newPage();
  await page.route("https://appsforoffice.microsoft.com/**", (r) => r.abort()); // no Internet here
  await page.goto(`${server.url}/addin/taskpane.html`);
  await page.evaluate(PAGE_HELPERS);
  const base = await page.evaluate(() => window.SteamcellFunctions.settings.serverUrl);
  check("served by the server itself: the functions call that server", base === server.url, base);
  const v = await page.evaluate(() => window.SteamcellFunctions.roles.property("h", "p", "3 MPa", "T", "300 K"));
  check("served by the server itself: Table 5 h (same origin, no CORS)", closeTo(v, 115.331273, 0, 5e-7), JSON.stringify(v));
  const status = await page.waitForFunction(() => document.getElementById("status").textContent.startsWith("connected"), null, { timeout: 10000 }).then(() => true, () => false);
  check("the settings pane shows the connection", status);
  const manifest = await (await fetch(`${server.url}/addin/manifest.xml`)).text();
  check("the served manifest points at this server", manifest.includes(`${server.url}/addin/functions.js`) && !manifest.includes("localhost:3000"));
  const meta = JSON.parse(await (await fetch(`${server.url}/addin/functions.json`)).text());
  check("the served metadata is clients/excel/functions.json", JSON.stringify(meta) === JSON.stringify(JSON.parse(readFileSync(join(EXCEL, "functions.json"), "utf8"))));
  await page.close();
}

async function bench(page) {
  const rows = 100000;
  const p = [];
  const t = [];
  for (let i = 0; i < rows; i++) {
    p.push([1 + (i % 100) * 0.05]);
    t.push([300 + (i % 300)]);
  }
  const r = await page.evaluate(([p, t]) => window.recalc([["COLUMN", ["h", "p", { range: p }, "T", { range: t }]]]), [p, t]);
  const col = r.values[0];
  const ok = Array.isArray(col) && col.length === rows && col.every((x) => typeof x[0] === "number");
  console.log(`  bench: SC.COLUMN on ${rows} rows in the browser: ${r.ms.toFixed(0)} ms, ${r.requests} request(s)${ok ? "" : " (values missing!)"}`);
}

async function main() {
  if (!existsSync(BIN)) {
    console.log(`steamcell binary not found at ${BIN}\n0 passed, 1 failed`);
    process.exit(1);
  }
  const pages = await pageServer();
  const origin = `http://127.0.0.1:${pages.address().port}`;
  const server = await startSteamcell(["--allow-origin", origin, "--site", `mill=${SITE}`]);
  const browser = await chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
  });
  try {
    const context = await browser.newContext();
    const counted = [];
    const page = await openHarness(context, origin, server);
    check("the page's origin is not the server's", origin !== new URL(server.url).origin);
    page.on("request", (r) => { if (r.url().startsWith(server.url)) counted.push({ method: r.method(), url: r.url() }); });
    const cdp = await context.newCDPSession(page);
    await cdp.send("Network.enable");
    cdp.on("Network.requestWillBeSent", (e) => { if (e.request.method === "OPTIONS" && e.request.url.startsWith(server.url)) counted.push({ method: "OPTIONS", url: e.request.url }); });
    const preflights = [];
    cdp.on("Network.responseReceived", (e) => { if (e.type === "Preflight" && e.response.url.startsWith(server.url)) preflights.push(e.response); });
    const names = await page.evaluate(() => Object.keys(window.CustomFunctions.associated).sort());
    const want = JSON.parse(readFileSync(join(EXCEL, "functions.json"), "utf8")).functions.map((f) => f.id).sort();
    check("every function of functions.json is associated", JSON.stringify(names) === JSON.stringify(want), names.join(","));
    await checkArgumentRules(page);
    await checkCases(page, server);
    check("the browser's CORS preflight was answered 204 with this origin allowed",
      preflights.length >= 1 && preflights.every((r) => r.status === 204 && r.headers["access-control-allow-origin"] === origin),
      JSON.stringify(preflights.map((r) => [r.status, r.headers])));
    await checkBatching(page, server, counted);
    if (BENCH) await bench(page);
    await checkCors(context, origin, server);
    await checkServedFiles(context, server);
  } finally {
    await browser.close();
    server.proc.kill();
    pages.close();
  }
  console.log(`${passed} passed, ${failed} failed`);
  process.exit(failed === 0 && passed > 0 ? 0 : 1);
}

main().catch((e) => {
  console.error(e);
  console.log(`${passed} passed, ${failed + 1} failed`);
  process.exit(1);
});
