/*
 * steamcell's Excel custom functions (SC.PROP, SC.COLUMN, SC.SAT, SC.METHOD, SC.SITE, SC.WHY,
 * SC.INFO), in the add-in's shared runtime (taskpane.html loads this file after
 * functions-table.js, which clients/generate.py writes from clients/functions.json).
 *
 * Every call of one recalculation goes to the steamcell server as ONE JSON-RPC batch request:
 * each function call is queued, and a timer of WINDOW_MS (started by the first call) sends the
 * whole queue as one POST (the batching pattern of the Office Add-ins documentation, "Batch
 * custom function calls for a remote service"). Identical calls share one entry; answers are
 * kept while the settings stay the same, so cells asking h, s and T of one state cost one call.
 *
 * Errors: a bad input or a state the server cannot compute gives #VALUE! with the server's
 * one-line message (shown on the cell's error flag, and by =SC.WHY(...)); an unreachable server
 * gives #N/A with what to start or set. COLUMN gives an error in a failed row's own cell.
 *
 * The argument rules are those of the LibreOffice add-in (clients/libreoffice/src/pythonpath/
 * steamcell_sheet/cells.py); clients/sheet-cases.json holds the cases both are tested against.
 *
 * The server: Home > steamcell settings (taskpane.html) stores its address, token and expected
 * validation digest in this add-in's browser storage, never in a workbook. Default: the server
 * that served this file when it came from `steamcell serve` (GET /addin/...), else
 * http://127.0.0.1:8790. An https:// server's certificate is checked by the browser (Excel's
 * web view) against the operating system's trust store; a private CA must be installed there.
 *
 * Pinning: with an expected digest, `server.info` is asked once (again after a settings change
 * or a failure) before any call; a server reporting another digest computes no cell (#N/A, the
 * message naming both digests).
 */
(function (global) {
  "use strict";

  var FUNCTIONS = global.STEAMCELL_FUNCTIONS || [];
  var PREFIX = global.STEAMCELL_PREFIX || "SC";
  var WINDOW_MS = 100; // the window of the documented pattern: calls of one recalculation arrive in bursts
  var MAX_BATCH = 1000; // the server's default --max-batch-requests
  var CALL_TIMEOUT_MS = 60000;
  var CACHE_ENTRIES = 50000;
  var KEY_URL = "steamcell.serverUrl";
  var KEY_TOKEN = "steamcell.token";
  var KEY_DIGEST = "steamcell.expectDigest";
  var NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

  // ------------------------------------------------------------------ errors

  function CellError(message, kind) {
    this.message = message;
    this.kind = kind || "value";
  }

  function fail(message, kind) {
    throw new CellError(message, kind);
  }

  /** The error value Excel shows for a CellError (#VALUE! or #N/A, with the message). */
  function excelError(e) {
    var CF = global.CustomFunctions;
    var message = e instanceof CellError ? e.message : "steamcell add-in error: " + String(e && e.message || e);
    var code = e instanceof CellError && e.kind === "engine" ? CF.ErrorCode.notAvailable : CF.ErrorCode.invalidValue;
    return new CF.Error(code, message);
  }

  // ------------------------------------------------------------------ settings

  function defaultServer() {
    var loc = global.location;
    if (loc && /^https?:$/.test(loc.protocol) && /^\/addin\//.test(loc.pathname)) {
      return loc.protocol + "//" + loc.host;
    }
    return "http://127.0.0.1:8790";
  }

  function storage() {
    try {
      if (global.localStorage) return global.localStorage;
    } catch (e) { /* storage blocked */ }
    return null;
  }

  var settings = { serverUrl: "", token: "", expectDigest: "" };

  function loadSettings() {
    var s = storage();
    settings.serverUrl = ((s && s.getItem(KEY_URL)) || "").trim() || defaultServer();
    settings.token = ((s && s.getItem(KEY_TOKEN)) || "").trim();
    settings.expectDigest = ((s && s.getItem(KEY_DIGEST)) || "").trim();
    settings.serverUrl = settings.serverUrl.replace(/\/+$/, "");
    pinCheck = null;
  }

  /** Stores the server address, token and expected digest (empty address: the default; empty
   *  digest: any) and forgets old answers. */
  function saveSettings(serverUrl, token, expectDigest) {
    var s = storage();
    if (s) {
      s.setItem(KEY_URL, (serverUrl || "").trim());
      s.setItem(KEY_TOKEN, (token || "").trim());
      s.setItem(KEY_DIGEST, (expectDigest || "").trim());
    }
    loadSettings();
    cache.clear();
  }

  // ------------------------------------------------------------------ argument rules

  function isMissing(v) {
    return v === null || v === undefined || (typeof v === "string" && v.trim() === "");
  }

  function scalar(v) {
    while (Array.isArray(v) && v.length === 1) {
      var inner = v[0];
      if (Array.isArray(inner) && inner.length === 1) v = inner[0];
      else if (Array.isArray(inner)) return v;
      else v = inner;
    }
    return v;
  }

  function textArg(v, what) {
    v = scalar(v);
    if (isMissing(v)) fail(what + " is missing: give it as a text, e.g. \"h\"");
    if (Array.isArray(v)) fail(what + " is a range; give one text");
    if (typeof v === "boolean") fail(what + " is TRUE/FALSE; give a text");
    return String(v).trim();
  }

  /** Two cells, a number and its unit (B7:C7 holding 42 and "barg"), as "42 barg"; null when
   *  not such a pair. The number is written with a decimal point whatever the locale. */
  function withUnit(pair) {
    if (!Array.isArray(pair)) return null;
    var flat = [];
    pair.forEach(function (r) { if (Array.isArray(r)) flat.push.apply(flat, r); else flat.push(r); });
    if (flat.length === 2 && typeof flat[0] === "number" && isFinite(flat[0]) && typeof flat[1] === "string" && flat[1].trim()) {
      return String(flat[0]) + " " + flat[1].trim();
    }
    return null;
  }

  function joined(row) {
    var num = row[0], unit = row[1];
    if (!(typeof unit === "string" && unit.trim())) return num;
    if (isMissing(num)) return "";
    if (typeof num === "number") return withUnit(row) || num;
    return String(num).trim() + " " + unit.trim();
  }

  function valueArg(v, what) {
    v = scalar(v);
    if (v === null || v === undefined) fail(what + " is empty: give a number or a text with its unit such as \"42 barg\"");
    if (Array.isArray(v)) {
      var flat = [];
      v.forEach(function (r) { if (Array.isArray(r)) flat.push.apply(flat, r); else flat.push(r); });
      if (flat.length === 2 && typeof flat[1] === "string" && flat[1].trim()) {
        var j = joined(flat);
        if (isMissing(j)) fail(what + " is an empty cell (beside its unit " + flat[1].trim() + ")");
        return j;
      }
      fail(what + " is a range of several cells; give one value, or two cells holding a number and its unit (or use COLUMN for ranges)");
    }
    if (typeof v === "boolean") fail(what + " is TRUE/FALSE, not a number or a text with its unit");
    if (typeof v === "number") {
      if (!isFinite(v)) fail(what + " is not a finite number");
      return v;
    }
    var s = String(v).trim();
    if (s === "") fail(what + " is empty: give a number or a text with its unit such as \"42 barg\"");
    return s;
  }

  function word(w) {
    if (w === "true") return true;
    if (w === "false") return false;
    if (NUMBER.test(w)) return Number(w);
    return w;
  }

  function put(out, dotted, value) {
    var parts = dotted.split(".");
    var at = out;
    for (var k = 0; k < parts.length - 1; k++) {
      var p = parts[k];
      if (at[p] === undefined) at[p] = {};
      else if (typeof at[p] !== "object" || at[p] === null || Array.isArray(at[p])) {
        fail("'" + parts.slice(0, k + 1).join(".") + "' is given both as a value and with names below it ('" + dotted + "')");
      }
      at = at[p];
    }
    var last = parts[parts.length - 1];
    if (Object.prototype.hasOwnProperty.call(at, last)) fail("'" + dotted + "' is given twice");
    at[last] = value;
  }

  function isSpace(c) {
    return c === " " || c === "\t" || c === "\n" || c === "\r" || c === ";";
  }

  /** Reads one JSON value at the start of s: [value, characters used]. */
  function jsonPrefix(s, name) {
    var depth = 0, inStr = false, esc = false;
    for (var i = 0; i < s.length; i++) {
      var c = s[i];
      if (inStr) {
        if (esc) esc = false;
        else if (c === "\\") esc = true;
        else if (c === "\"") inStr = false;
        continue;
      }
      if (c === "\"") inStr = true;
      else if (c === "{" || c === "[") depth++;
      else if (c === "}" || c === "]") {
        depth--;
        if (depth === 0) {
          try {
            return [JSON.parse(s.slice(0, i + 1)), i + 1];
          } catch (e) {
            fail("options: the value of " + name + " is not valid JSON (" + e.message + ")");
          }
        }
      }
    }
    fail("options: the value of " + name + " is not valid JSON (no closing bracket)");
  }

  /** The params an options text adds (name=value items, see cells.py). */
  function parseOptions(text) {
    text = scalar(text);
    if (isMissing(text)) return {};
    if (Array.isArray(text)) fail("options is a range; give one text such as \"units=us prefer=liquid\"");
    if (typeof text === "number") fail("options is the number " + text + "; give a text such as \"units=us\"");
    var s = String(text), out = {}, i = 0, n = s.length;
    while (i < n) {
      while (i < n && isSpace(s[i])) i++;
      if (i >= n) break;
      var eq = s.indexOf("=", i), stop = i;
      while (stop < n && !isSpace(s[stop])) stop++;
      if (eq < 0 || eq > stop) fail("options: '" + s.slice(i, stop) + "' is not name=value (e.g. units=us prefer=liquid)");
      var name = s.slice(i, eq).trim();
      if (!/^[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z0-9_]+)*$/.test(name)) fail("options: '" + s.slice(i, eq) + "' is not an option name");
      var j = eq + 1, value;
      if (j < n && s[j] === "\"") {
        var end = s.indexOf("\"", j + 1);
        if (end < 0) fail("options: the text after " + name + "= has no closing quote");
        value = s.slice(j + 1, end);
        i = end + 1;
      } else if (j < n && (s[j] === "{" || s[j] === "[")) {
        var r = jsonPrefix(s.slice(j), name);
        value = r[0];
        i = j + r[1];
      } else {
        var k = j;
        while (k < n && !isSpace(s[k])) k++;
        var w = s.slice(j, k);
        i = k;
        if (w === "") fail("options: " + name + "= has no value");
        value = word(w);
      }
      put(out, name, value);
    }
    return out;
  }

  function putIndexed(out, dotted, value) {
    var parts = dotted.split(".");
    if (parts.some(function (p) { return p === ""; })) fail("parameter name '" + dotted + "' has an empty part");
    var at = out;
    for (var k = 0; k < parts.length; k++) {
      var p = parts[k], last = k === parts.length - 1;
      var nextIsIndex = !last && /^\d+$/.test(parts[k + 1]);
      if (Array.isArray(at)) p = Number(p);
      if (last) {
        if (at[p] !== undefined && at[p] !== null) fail("'" + dotted + "' is given twice");
        at[p] = value;
      } else {
        if (at[p] === undefined || at[p] === null) at[p] = nextIsIndex ? [] : {};
        else if (typeof at[p] !== "object") {
          fail("'" + parts.slice(0, k + 1).join(".") + "' is given both as a value and with names below it ('" + dotted + "')");
        }
        at = at[p];
      }
    }
  }

  function checkHoles(v, path) {
    if (Array.isArray(v)) {
      for (var i = 0; i < v.length; i++) {
        if (v[i] === undefined || v[i] === null) fail("'" + path + "." + i + "' is missing (list elements are numbered from 0)");
        checkHoles(v[i], path + "." + i);
      }
    } else if (v && typeof v === "object") {
      Object.keys(v).forEach(function (k) { checkHoles(v[k], path ? path + "." + k : k); });
    }
  }

  function trimPairs(pairs) {
    return (pairs || []).map(scalar);
  }

  /** Name/value arguments as one params object (dotted names nest, number segments index lists). */
  function pairsToParams(pairs, what) {
    var flat = trimPairs(pairs);
    if (flat.length % 2) fail((what || "pairs") + ": give name, value pairs; " + flat.length + " arguments leave the last name (" + JSON.stringify(flat[flat.length - 1]) + ") without a value");
    var out = {};
    for (var k = 0; k < flat.length; k += 2) {
      var name = textArg(flat[k], "parameter name " + (k / 2 + 1));
      var raw = flat[k + 1], value;
      if (typeof raw === "boolean") value = raw;
      else {
        value = valueArg(raw, "the value of " + name);
        if (value === "true" || value === "false") value = value === "true";
      }
      putIndexed(out, name, value);
    }
    checkHoles(out, "");
    return out;
  }

  /** The value at a dotted path of a result: a number or a text; null gives its reason. */
  function pick(result, path, what) {
    var at = result, parent = null, parts = path.split(".");
    for (var k = 0; k < parts.length; k++) {
      var p = parts[k], where = k === 0 ? what : "'" + parts.slice(0, k).join(".") + "'";
      if (Array.isArray(at)) {
        if (!/^\d+$/.test(p) || Number(p) >= at.length) fail("'" + p + "' in '" + path + "' is not an index of " + where + " (0 to " + (at.length - 1) + ")");
        parent = null;
        at = at[Number(p)];
      } else if (at && typeof at === "object") {
        if (!Object.prototype.hasOwnProperty.call(at, p)) {
          var known = Object.keys(at).filter(function (x) { return x !== "units" && x !== "undefined"; }).join(", ");
          fail("unknown quantity '" + path + "': '" + p + "' is not in " + where + "; known there: " + known);
        }
        parent = at;
        at = at[p];
      } else {
        fail("'" + path + "': " + where + " is a single value, it has no '" + p + "'");
      }
    }
    if (at === null || at === undefined) {
      var reason = parent && parent.undefined && parent.undefined[parts[parts.length - 1]];
      fail(path + " is not defined here" + (reason ? ": " + reason : ""));
    }
    if (typeof at === "boolean") return at ? 1 : 0;
    if (typeof at === "number" || typeof at === "string") return at;
    var names = Array.isArray(at) ? "0 to " + (at.length - 1) : Object.keys(at).join(", ");
    fail("'" + path + "' is a " + (Array.isArray(at) ? "list" : "group of values") + ", not one number; name one of its parts (" + names + ")");
  }

  /** A range (or one value) as a flat list and its orientation ("column", "row" or null). */
  function columnValues(v, what) {
    if (!Array.isArray(v)) return [[v], null];
    var rows = v.map(function (r) { return Array.isArray(r) ? r : [r]; });
    if (rows.length === 1) return [rows[0].slice(), rows[0].length > 1 ? "row" : null];
    if (rows.every(function (r) { return r.length === 1; })) return [rows.map(function (r) { return r[0]; }), "column"];
    if (rows.every(function (r) { return r.length === 2; }) && rows.some(function (r) { return typeof r[1] === "string" && r[1].trim(); })) {
      return [rows.map(joined), "column"]; // two columns: numbers and their units
    }
    var width = Math.max.apply(null, rows.map(function (r) { return r.length; }));
    fail(what + " is a block of " + rows.length + " rows by " + width + " columns; give one column or one row");
  }

  function own(params, names, fn) {
    names.forEach(function (n) {
      if (Object.prototype.hasOwnProperty.call(params, n)) fail("options: '" + n + "' is set by " + PREFIX + "." + fn + "'s own arguments");
    });
  }

  // ------------------------------------------------------------------ the server, in batches

  var queue = [];
  var timer = null;
  var cache = new Map();
  var stats = { requests: 0, calls: 0, batches: [] };
  var nextId = 1;
  var pinCheck = null;

  function headers(json) {
    var h = { "Accept": "application/json" };
    if (json) h["Content-Type"] = "application/json";
    if (settings.token) h["Authorization"] = "Bearer " + settings.token;
    return h;
  }

  function unreachable(err) {
    var origin = global.location && global.location.origin;
    var same = origin && settings.serverUrl.indexOf(origin) === 0;
    return new CellError("cannot reach the steamcell server at " + settings.serverUrl + " (" + (err && err.message || err) +
      "): start it with `steamcell serve" + (same || !origin || origin === "null" ? "" : " --allow-origin " + origin) +
      "`, or set its address in Home > steamcell settings", "engine");
  }

  function withTimeout(promise, ms) {
    return new Promise(function (resolve, reject) {
      var t = setTimeout(function () { reject(new Error("no answer within " + ms / 1000 + " s")); }, ms);
      promise.then(function (v) { clearTimeout(t); resolve(v); }, function (e) { clearTimeout(t); reject(e); });
    });
  }

  async function post(payload) {
    stats.requests++;
    var resp;
    try {
      resp = await withTimeout(global.fetch(settings.serverUrl + "/", {
        method: "POST", headers: headers(true), body: JSON.stringify(payload), mode: "cors", credentials: "omit"
      }), CALL_TIMEOUT_MS);
    } catch (e) {
      throw unreachable(e);
    }
    if (resp.status === 401) throw new CellError("the steamcell server at " + settings.serverUrl + " refused the token: set the right token in Home > steamcell settings", "engine");
    var text = await resp.text();
    if (resp.status === 403) throw new CellError("the steamcell server at " + settings.serverUrl + " refused this add-in: " + text.trim(), "engine");
    try {
      return JSON.parse(text);
    } catch (e) {
      throw new CellError("the steamcell server at " + settings.serverUrl + " answered HTTP " + resp.status + " without JSON: " + text.slice(0, 200), "engine");
    }
  }

  /** Resolves when the server may be used: no digest is expected, or `server.info` reports the
   *  expected one (asked once per settings; a failure is asked again next time). */
  function pin() {
    if (!settings.expectDigest) return Promise.resolve();
    if (!pinCheck) {
      var want = settings.expectDigest;
      pinCheck = (async function () {
        var a = await post({ jsonrpc: "2.0", id: nextId++, method: "server.info" });
        var found = a && a.result ? a.result.digest : undefined;
        if (found !== want) {
          throw new CellError("the steamcell server at " + settings.serverUrl + " reports the validation digest " + found +
            ", not the expected " + want + " (Home > steamcell settings): a different or unvalidated build, so no cell is computed", "engine");
        }
      })();
      pinCheck.catch(function () { pinCheck = null; });
    }
    return pinCheck;
  }

  async function sendBatch(entries) {
    var reqs = entries.map(function (e) {
      var r = { jsonrpc: "2.0", id: nextId++, method: e.method };
      if (e.params !== null && e.params !== undefined) r.params = e.params;
      e.id = r.id;
      return r;
    });
    stats.calls += reqs.length;
    stats.batches.push(reqs.length);
    var answer;
    try {
      await pin();
      answer = await post(reqs);
    } catch (err) {
      entries.forEach(function (e) { e.reject(err); });
      return;
    }
    if (!Array.isArray(answer)) {
      var msg = answer && answer.error ? answer.error.message : "unexpected answer";
      entries.forEach(function (e) { e.reject(new CellError(msg)); });
      return;
    }
    var byId = new Map();
    answer.forEach(function (a) { if (a && a.id !== undefined) byId.set(a.id, a); });
    entries.forEach(function (e) {
      var a = byId.get(e.id);
      if (!a) e.reject(new CellError("no answer from the server for this call"));
      else if (a.error) e.reject(new CellError(String(a.error.message || "error")));
      else e.resolve(a.result);
    });
  }

  function flush() {
    timer = null;
    var entries = queue.splice(0, queue.length);
    for (var k = 0; k < entries.length; k += MAX_BATCH) sendBatch(entries.slice(k, k + MAX_BATCH));
  }

  /** One JSON-RPC call, queued into the next batch; identical calls share one answer. */
  function rpc(method, params) {
    var key = method + "\u0000" + JSON.stringify(params);
    var hit = cache.get(key);
    if (hit) return hit;
    var p = new Promise(function (resolve, reject) {
      queue.push({ method: method, params: params, resolve: resolve, reject: reject });
      if (queue.length >= MAX_BATCH) {
        if (timer) clearTimeout(timer);
        flush();
      } else if (!timer) {
        timer = setTimeout(flush, WINDOW_MS);
      }
    });
    if (cache.size >= CACHE_ENTRIES) cache.clear();
    cache.set(key, p);
    // An unreachable server is not remembered: the next recalculation tries again.
    p.catch(function (e) { if (!(e instanceof CellError) || e.kind === "engine") cache.delete(key); });
    return p;
  }

  async function getText(target) {
    var key = "GET\u0000" + target;
    var hit = cache.get(key);
    if (hit) return hit;
    var p = (async function () {
      await pin();
      stats.requests++;
      var resp;
      try {
        resp = await withTimeout(global.fetch(settings.serverUrl + target, { method: "GET", headers: headers(false), mode: "cors", credentials: "omit" }), CALL_TIMEOUT_MS);
      } catch (e) {
        throw unreachable(e);
      }
      if (resp.status === 401) throw new CellError("the steamcell server at " + settings.serverUrl + " refused the token: set the right token in Home > steamcell settings", "engine");
      return { status: resp.status, text: (await resp.text()).trim() };
    })();
    cache.set(key, p);
    p.catch(function () { cache.delete(key); });
    return p;
  }

  // ------------------------------------------------------------------ roles

  var roles = {};

  roles.property = async function (quantity, name1, value1, name2, value2, options) {
    var q = textArg(quantity, "quantity"), n1 = textArg(name1, "name1"), n2 = textArg(name2, "name2");
    if (n1 === n2) fail("name1 and name2 are both '" + n1 + "': give two different properties");
    var given = {};
    given[n1] = valueArg(value1, "value1 (" + n1 + ")");
    given[n2] = valueArg(value2, "value2 (" + n2 + ")");
    var params = parseOptions(options);
    own(params, ["given"], "PROP");
    params.given = given;
    return pick(await rpc("water.state", params), q, "the state");
  };

  roles.saturation = async function (quantity, name, value, options) {
    var q = textArg(quantity, "quantity"), n = textArg(name, "name");
    if (n !== "p" && n !== "T") fail("name is '" + n + "': the saturation line is reached from p or T");
    var params = parseOptions(options);
    own(params, ["p", "T"], "SAT");
    params[n] = valueArg(value, "value (" + n + ")");
    return pick(await rpc("water.saturation", params), q, "the saturation state");
  };

  var schemaMethods = null;
  async function methods() {
    if (!schemaMethods) {
      schemaMethods = rpc("server.schema", null).then(function (doc) {
        return new Set((doc.methods || []).map(function (m) { return m.name; }));
      });
      schemaMethods.catch(function () { schemaMethods = null; });
    }
    return schemaMethods;
  }

  roles.method = async function (method, result, pairs) {
    var m = textArg(method, "method"), path = textArg(result, "result");
    var params = pairsToParams(pairs);
    var known = await methods();
    if (!known.has(m)) fail("unknown method '" + m + "'; the server has: " + Array.from(known).sort().join(", "));
    return pick(await rpc(m, params), path, "the result of " + m);
  };

  roles.site = async function (site, quantity, pairs) {
    var name = textArg(site, "site"), q = textArg(quantity, "quantity");
    var flat = trimPairs(pairs);
    if (flat.length % 2) fail("give specification, value pairs after the quantity; " + flat.length + " arguments leave the last one without a value");
    var query = [];
    for (var k = 0; k < flat.length; k += 2) {
      var spec = textArg(flat[k], "specification " + (k / 2 + 1));
      var value = valueArg(flat[k + 1], "the value of " + spec);
      query.push(encodeURIComponent(spec) + "=" + encodeURIComponent(typeof value === "number" ? String(value) : value));
    }
    var target = "/site/" + encodeURIComponent(name) + "/" + encodeURIComponent(q) + (query.length ? "?" + query.join("&") : "");
    var r = await getText(target);
    if (r.status !== 200) fail(r.text);
    var x = Number(r.text);
    return r.text !== "" && isFinite(x) ? x : r.text;
  };

  function cellProblem(v, name) {
    if (v === null || v === undefined || (typeof v === "string" && v.trim() === "")) return name + " is an empty cell";
    if (typeof v === "boolean") return name + " is TRUE/FALSE, not a number";
    if (typeof v === "number" && !isFinite(v)) return name + " is not a finite number";
    return null;
  }

  function packed(values) {
    var buf = new ArrayBuffer(values.length * 8), view = new DataView(buf);
    for (var i = 0; i < values.length; i++) view.setFloat64(i * 8, values[i], true);
    var bytes = new Uint8Array(buf), parts = [];
    for (var k = 0; k < bytes.length; k += 0x8000) parts.push(String.fromCharCode.apply(null, bytes.subarray(k, k + 0x8000)));
    return { f64le: global.btoa(parts.join("")) };
  }

  function unpacked(b64) {
    var bin = global.atob(b64), n = bin.length / 8, view = new DataView(new ArrayBuffer(bin.length));
    for (var i = 0; i < bin.length; i++) view.setUint8(i, bin.charCodeAt(i));
    var out = new Array(n);
    for (var k = 0; k < n; k++) out[k] = view.getFloat64(k * 8, true);
    return out;
  }

  function rowMessage(message) {
    var m = /^row (\d+): ([\s\S]*)$/.exec(message);
    return m ? m[2] : message;
  }

  /** {values, failures, orientation}: one value per row (null when failed), messages by row. */
  roles.columns = async function (quantity, name1, values1, name2, values2, options) {
    var q = textArg(quantity, "quantity"), n1 = textArg(name1, "name1"), n2 = textArg(name2, "name2");
    if (n1 === n2) fail("name1 and name2 are both '" + n1 + "': give two different properties");
    if (values1 === null || values1 === undefined) fail("values1 is missing");
    if (values2 === null || values2 === undefined) fail("values2 is missing");
    var a = columnValues(values1, "values1 (" + n1 + ")"), b = columnValues(values2, "values2 (" + n2 + ")");
    var c1 = a[0], c2 = b[0];
    if (c1.length !== c2.length && c1.length > 1 && c2.length > 1) {
      fail("values1 has " + c1.length + " values and values2 has " + c2.length + ": give ranges of equal length (or one value for every row)");
    }
    var rows = Math.max(c1.length, c2.length), i;
    if (c1.length === 1) c1 = new Array(rows).fill(c1[0]);
    if (c2.length === 1) c2 = new Array(rows).fill(c2[0]);
    var orientation = a[1] || b[1] || "column";
    var failures = {}, good = [];
    for (i = 0; i < rows; i++) {
      var bad = cellProblem(c1[i], n1) || cellProblem(c2[i], n2);
      if (bad) failures[i] = bad; else good.push(i);
    }
    var params = parseOptions(options);
    own(params, ["given", "want", "encoding"], "COLUMN");
    var out = new Array(rows).fill(null);
    if (good.length) {
      var g1 = good.map(function (k) { return c1[k]; }), g2 = good.map(function (k) { return c2[k]; });
      var col = function (vs) {
        return vs.every(function (v) { return typeof v === "number"; }) ? packed(vs) : vs.map(function (v) { return typeof v === "number" ? v : String(v).trim(); });
      };
      params.given = {};
      params.given[n1] = col(g1);
      params.given[n2] = col(g2);
      params.want = [q];
      params.encoding = "f64le";
      var res = await rpc("water.batch", params);
      var column = res.columns && res.columns[q];
      if (column === undefined) fail("unknown quantity '" + q + "' for COLUMN");
      var values = column && column.f64le !== undefined ? unpacked(column.f64le) : column.map(function (v) { return v === null ? NaN : v; });
      good.forEach(function (row, k) { out[row] = values[k]; });
      (res.failed_rows || []).forEach(function (e) {
        var row = good[e.row];
        out[row] = null;
        failures[row] = rowMessage(e.message || "error");
      });
      good.forEach(function (row) {
        if (out[row] !== null && !isFinite(out[row]) && failures[row] === undefined) {
          out[row] = null;
          failures[row] = q + " is not defined for this row";
        }
      });
    }
    return { values: out, failures: failures, orientation: orientation };
  };

  var ROLE_OF = {};
  FUNCTIONS.forEach(function (f) {
    ROLE_OF[f.name.toLowerCase()] = f.role;
    ROLE_OF[(PREFIX + "." + f.name).toLowerCase()] = f.role;
    ROLE_OF[f.role] = f.role;
  });

  roles.info = async function (item) {
    var what = isMissing(scalar(item)) ? "" : textArg(item, "item").toLowerCase();
    if (what === "addin") return "steamcell Excel add-in 0.1.0";
    if (what === "engine") return "server " + settings.serverUrl;
    var data = await rpc("server.info", null);
    var formulation = ((data.formulations || [])[0] || {}).name || "?";
    var version = ((data.name || "steamcell") + " " + (data.version || "")).trim();
    if (what === "version") return version;
    if (what === "formulation") return formulation;
    if (what === "digest") return data.digest || "";
    if (what === "methods") return (data.methods || []).join(", ");
    if (what) fail("item '" + what + "' is not one of: version, formulation, digest, engine, methods, addin");
    return version + "; " + formulation + "; validation digest " + (data.digest || "?");
  };

  /** The message the named function gives for these arguments, or "" when it computes. */
  roles.why = async function (fn, args) {
    var name = textArg(fn, "function"), role = ROLE_OF[name.toLowerCase()];
    if (!role || role === "why") {
      fail("function '" + name + "' is not one of: " + FUNCTIONS.filter(function (f) { return f.role !== "why"; }).map(function (f) { return f.name; }).join(", "));
    }
    args = (args || []).map(function (a) { return Array.isArray(a) && a.length === 1 && Array.isArray(a[0]) && a[0].length === 1 ? a[0][0] : a; });
    var pad = function (n) { var x = args.slice(0, n); while (x.length < n) x.push(null); return x; };
    try {
      if (role === "columns") {
        var r = await roles.columns.apply(null, pad(6));
        var rows = Object.keys(r.failures).map(Number).sort(function (x, y) { return x - y; });
        if (!rows.length) return "";
        return "row " + (rows[0] + 1) + ": " + r.failures[rows[0]] + (rows.length > 1 ? " (and " + (rows.length - 1) + " more rows)" : "");
      }
      if (role === "method" || role === "site") {
        var head = pad(2);
        await roles[role](head[0], head[1], args.slice(2));
      } else if (role === "property") await roles.property.apply(null, pad(6));
      else if (role === "saturation") await roles.saturation.apply(null, pad(4));
      else if (role === "info") await roles.info.apply(null, pad(1));
    } catch (e) {
      if (e instanceof CellError) return e.message;
      throw e;
    }
    return "";
  };

  // ------------------------------------------------------------------ Excel's entry points

  /** The custom function of one row of the function table, as Excel calls it. */
  function entryPoint(f) {
    var nParams = f.params.length;
    return async function () {
      var args = Array.prototype.slice.call(arguments, 0, nParams); // the last argument is Excel's invocation
      try {
        if (f.role === "columns") {
          var r = await roles.columns.apply(null, args);
          var cells = r.values.map(function (v, i) { return v === null ? excelError(new CellError(r.failures[i] || "no value")) : v; });
          return r.orientation === "row" ? [cells] : cells.map(function (v) { return [v]; });
        }
        if (f.role === "method" || f.role === "site") return await roles[f.role](args[0], args[1], args[2] || []);
        if (f.role === "why") {
          try {
            return await roles.why(args[0], args[1] || []);
          } catch (e) {
            return e instanceof CellError ? e.message : "steamcell add-in error: " + String(e && e.message || e);
          }
        }
        return await roles[f.role].apply(null, args);
      } catch (e) {
        throw excelError(e);
      }
    };
  }

  loadSettings();
  var api = {
    roles: roles, parseOptions: parseOptions, pairsToParams: pairsToParams, pick: pick,
    settings: settings, saveSettings: saveSettings, loadSettings: loadSettings, stats: stats,
    CellError: CellError, entryPoints: {}, clearCache: function () { cache.clear(); schemaMethods = null; }
  };
  FUNCTIONS.forEach(function (f) {
    api.entryPoints[f.name] = entryPoint(f);
    if (global.CustomFunctions && global.CustomFunctions.associate) global.CustomFunctions.associate(f.name, api.entryPoints[f.name]);
  });
  global.SteamcellFunctions = api;
})(typeof self !== "undefined" ? self : this);
