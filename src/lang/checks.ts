/**
 * Checks of the whole network, once every statement has run: probe arguments name what they read, sweeps vary
 * params that exist with values of the right dimension and within the point limit, `set model = ekv` has its
 * parameters, no internal node shares a name with another element, every node has a DC path to a rail, and every
 * sweep value gives valid params, rails, injects, sizes and settings.
 */
import { checkConnectivity } from "./connectivity";
import type { Elaboration } from "./context";
import { fmt } from "./diagnostics";
import type { Network } from "./network";
import { pointScope } from "./point";
import { suggest } from "./suggest";
import { checkReads } from "./reads";
import { compatible, describeDim, KELVIN } from "./units";

/** Every check that needs the finished tables (before the network is assembled). */
export function checkElaboration(cx: Elaboration, syntaxErrors: number): void {
  resolveProbes(cx);
  checkSeeks(cx);
  checkSweeps(cx);
  checkModel(cx);
  checkNodeNames(cx);
  checkConnections(cx, syntaxErrors);
}

/** Each seek names a probe of the network and a param that is not swept. */
function checkSeeks(cx: Elaboration): void {
  const probes = new Set(cx.probes.map((p) => p.name));
  for (const s of cx.seeks) {
    if (!probes.has(s.probe))
      cx.sink.error(
        s.probeFrom,
        s.probeTo,
        `seek measures '${s.probe}', which is not a probe`,
        suggest(s.probe, probes.values()) ?? "measure=NAME names a probe NAME = EXPR of this network",
      );
    if (cx.sweeps.some((w) => w.param === s.param))
      cx.sink.error(s.span.from, s.span.to, `'${s.param}' is swept and sought: the search sets it, drop one of them`);
  }
}

/** Checks what every probe and expectation reads against the finished tables. */
function resolveProbes(cx: Elaboration): void {
  for (const p of cx.probes) checkReads(cx, p.args);
  for (const x of cx.expectations) checkReads(cx, x.reads);
}

/** Each param swept once, with values of its dimension; the grid times the mismatch runs within maxPoints. */
function checkSweeps(cx: Elaboration): void {
  const { sink, values, namespace, limits } = cx;
  const seen = new Map<string, number>();
  let points = 1;
  for (const s of cx.sweeps) {
    if (seen.has(s.param)) {
      sink.error(s.nameFrom, s.nameTo, `'${s.param}' is swept twice (first on line ${cx.line(seen.get(s.param)!)})`);
      continue;
    }
    seen.set(s.param, s.span.from);
    if (s.param !== "temp") {
      const p = values.params.get(s.param);
      if (!p) {
        if (namespace.broken.has(s.param)) continue;
        const setting = s.param === "kappa" || s.param === "ut";
        const hint = setting
          ? `only params and temp can be swept: write param k = 0.7, set kappa = k, and sweep k`
          : (suggest(s.param, values.params.keys()) ?? "declare it with param NAME = VALUE");
        const what = setting ? `'${s.param}' cannot be swept directly` : `sweep of unknown param '${s.param}'`;
        sink.error(s.nameFrom, s.nameTo, what, hint);
        continue;
      }
      if (!compatible(p.dim, s.dim)) {
        sink.error(
          s.dimFrom,
          s.dimTo,
          `the sweep values are ${describeDim(s.dim)}, but '${s.param}' is ${describeDim(p.dim)}`,
        );
        continue;
      }
    } else if (!compatible(KELVIN, s.dim)) {
      sink.error(s.dimFrom, s.dimTo, `a temperature sweep takes kelvin, but this is ${describeDim(s.dim)}`);
      continue;
    }
    points *= s.values.length;
  }
  const runs = cx.mismatch?.runs ?? 1;
  if (cx.sweeps.length && points * runs > limits.maxPoints) {
    const s = cx.sweeps[0];
    sink.error(
      s.span.from,
      cx.lines.lineEnd(s.span.from),
      `the sweeps make ${(points * runs).toLocaleString("en-US")} solves${runs > 1 ? " with the mismatch runs" : ""}, more than the limit of ${limits.maxPoints.toLocaleString("en-US")}`,
      "use fewer sweep points or mismatch runs",
    );
  }
}

/** `set model = ekv` needs vt0 and ispec. */
function checkModel(cx: Elaboration): void {
  const { settings, settingAt } = cx.values;
  if (settings.model !== "ekv") return;
  const at = settingAt.get("model")!;
  const missing = [settings.vt0 === null ? "vt0" : null, settings.ispec === null ? "ispec" : null].filter(Boolean);
  if (missing.length)
    cx.sink.error(
      at.from,
      cx.lines.lineEnd(at.from),
      `set model = ekv needs ${missing.join(" and ")}`,
      "for example set vt0 = 450m and set ispec = 100n",
    );
}

/**
 * One namespace: an internal node may not share its name with anything else. A node made through a shape no
 * device name can match needs no device look-up; injects and probes are looked up from the smaller side.
 */
function checkNodeNames(cx: Elaboration): void {
  const { nodes, devices, injects, shapes, sink } = cx;
  const nodeCount = nodes.length;
  const devCheck = new Int8Array(shapes.list.length).fill(-1); // -1 not yet known, 0 no, 1 yes
  const shapeOf = nodes.shape.data;
  const injMark = injects.length < nodeCount ? markNodes(cx, injects.names) : null;
  const probeMark = cx.probeAt.size < nodeCount ? markNodes(cx, cx.probeAt.keys()) : null;
  for (let i = 0; i < nodeCount; i++) {
    if (nodes.isRail.data[i]) continue;
    const sh = shapeOf[i];
    if (sh >= 0 && devCheck[sh] < 0) devCheck[sh] = devices.names.mayCarry(shapes.list[sh].lits) ? 1 : 0;
    // The string only when some check below reads it.
    const name = sh < 0 || devCheck[sh] === 1 || !injMark || !probeMark ? nodes.names.names.at(i)! : "";
    const other = (sh < 0 ? devices.names.has(name) : devCheck[sh] === 1 && devices.names.index.full().has(name))
      ? "a device"
      : (injMark ? injMark[i] === 1 : injects.index.has(name))
        ? "an inject"
        : (probeMark ? probeMark[i] === 1 : cx.probeAt.has(name))
          ? "a probe"
          : null;
    if (other)
      sink.error(
        nodes.from.data[i],
        nodes.to.data[i],
        `node name '${name || nodes.names.names.at(i)}' is already ${other}`,
        "every name means one thing: rename one of them",
      );
  }
}

/** 1 for every node that carries one of the names. */
function markNodes(cx: Elaboration, names: Iterable<string>): Uint8Array {
  const mark = new Uint8Array(cx.nodes.length);
  for (const n of names) {
    const i = cx.nodes.names.find(n);
    if (i !== undefined) mark[i] = 1;
  }
  return mark;
}

/** Floating nodes (errors), nodes with one terminal and unused rails (warnings). */
function checkConnections(cx: Elaboration, syntaxErrors: number): void {
  const { nodes, devices, injects, sink } = cx;
  if (syntaxErrors > 0 && nodes.length === 0) return;
  const r = checkConnectivity({
    nodeCount: nodes.length,
    isRail: nodes.isRail.data,
    deviceCount: devices.length,
    gate: devices.gate.data,
    source: devices.source.data,
    drain: devices.drain.data,
    bulk: devices.bulk.data,
    injectCount: injects.length,
    injectFrom: injects.from.data,
    injectTo: injects.to.data,
  });
  const name = (i: number) => nodes.names.names.at(i);
  for (const i of r.floating) {
    if (nodes.suppressed.has(i)) continue;
    sink.error(
      nodes.from.data[i],
      nodes.to.data[i],
      `node '${name(i)}' has no DC path to any rail`,
      "connect it through a device channel (source or drain) to a rail; gates and injects carry no DC current",
    );
  }
  for (const i of r.single) {
    if (nodes.suppressed.has(i)) continue;
    sink.warning(
      nodes.from.data[i],
      nodes.to.data[i],
      `node '${name(i)}' is touched by only one terminal`,
      "a node joins at least two terminals: check the spelling of its name",
    );
  }
  for (const i of r.unusedRails) {
    if (nodes.suppressed.has(i)) continue;
    const rail = nodes.rail(i);
    if (rail) sink.warning(rail.span.from, rail.span.to, `rail '${rail.name}' is not connected to anything`);
  }
}

/** Bindings times values beyond which a sweep is not checked point by point. */
const SWEEP_CHECK_BUDGET = 200_000;

/**
 * Every sweep value, one sweep at a time with the others at their defaults, must give valid params, rails,
 * injects, lengths and settings. Bounded: a sweep whose bindings times values exceed the budget is not checked.
 */
export function checkSweepPoints(cx: Elaboration, net: Network): void {
  for (const s of net.sweeps) {
    const deps = s.param === "temp" ? ["temp", "ut"] : [s.param];
    const affected = net.bindings.filter((b) => b.dependsOn.some((d) => deps.includes(d)));
    if ((affected.length + net.params.length) * s.values.length > SWEEP_CHECK_BUDGET) continue;
    const at = (v: number, what: string) =>
      cx.sink.error(
        s.span.from,
        cx.lines.lineEnd(s.span.from),
        `at ${s.param} = ${fmt(v)}, ${what}`,
        "narrow the sweep range",
      );
    check: for (const v of s.values) {
      const scope = pointScope(net, { [s.param]: v });
      for (const p of net.params) {
        if (!Number.isFinite(scope[p.name])) {
          at(v, `param '${p.name}' is ${fmt(scope[p.name])}`);
          break check;
        }
      }
      if (!(scope.kappa > 0 && scope.kappa <= 1)) {
        at(v, `kappa is ${fmt(scope.kappa)}, outside 0 to 1`);
        break;
      }
      for (const b of affected) {
        const t = b.target;
        const x = b.evaluate(scope);
        let bad: string | null = null;
        if (t.kind === "w" || t.kind === "l") {
          if (!(x > 0 && Number.isFinite(x)))
            bad = `${t.kind} of device '${net.devices.names[t.index]}' is ${fmt(x)}; a length must be positive`;
        } else if (t.kind === "rail") {
          if (!Number.isFinite(x)) bad = `rail '${net.nodes.names[t.node]}' is ${fmt(x)}`;
        } else if (t.kind === "inject") {
          if (!Number.isFinite(x)) bad = `inject '${net.injects.names[t.index]}' is ${fmt(x)}`;
        } else if (t.name === "i0" || t.name === "ispec") {
          if (!(x > 0 && Number.isFinite(x))) bad = `${t.name} is ${fmt(x)}; it must be a positive current`;
        } else if (t.name === "vt0" && !Number.isFinite(x)) bad = `vt0 is ${fmt(x)}`;
        if (bad) {
          at(v, bad);
          break check;
        }
      }
    }
  }
}
