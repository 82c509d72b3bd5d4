/**
 * The circuit simulator ngspice (Debian package `ngspice`) as an independent reference for
 * single-phase networks, used only by tests. A hydraulic network of linear resistances is a
 * resistor circuit (pressure ↔ voltage, volume flow ↔ current, Δp = R·Q ↔ Ohm's law), so its DC
 * operating point is the network's solution. Exports `ngspiceAvailable`, `ngspiceOperatingPoint`
 * and the circuit types. Shares no code with src/: the netlist is written and the answer read
 * back as text.
 *
 * Units: ngspice compares node voltages and branch currents with absolute tolerances and pivot
 * thresholds meant for electronics (vntol 1 µV, abstol 1 pA, pivtol 1e-13), so hydraulic values
 * are rescaled to lie near 1: volts are pascals and amperes are nanolitres per second
 * (1 A ↔ 1e-12 m³/s, 1 Ω ↔ 1e12 Pa·s/m³). Every value is written with 17 significant digits.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** m³/s per ampere of the netlist. */
export const FLOW_PER_AMPERE = 1e-12;

export interface Circuit {
  title: string;
  /** Resistances between two nodes, Pa·s/m³; the current is reported from `a` to `b`. */
  resistors: Array<{ a: string; b: string; resistance: number }>;
  /** Nodes held at a pressure, Pa (a voltage source from ground). */
  pressures: Array<{ node: string; pressure: number }>;
  /** Flows injected into nodes, m³/s (a current source from ground). */
  injections: Array<{ node: string; flow: number }>;
}

export interface OperatingPoint {
  /** Pressure of every named node, Pa. */
  pressure: Map<string, number>;
  /** Flow through every resistor, from `a` to `b`, m³/s (same order as `circuit.resistors`). */
  flow: number[];
  /** The netlist that was solved, for failure messages. */
  netlist: string;
}

let available: boolean | undefined;

/** Whether `ngspice` can be started. */
export function ngspiceAvailable(): boolean {
  if (available === undefined) {
    const probe = spawnSync('ngspice', ['--version'], { encoding: 'utf8' });
    available = probe.error === undefined && probe.status === 0;
  }
  return available;
}

const number = (value: number) => {
  if (!Number.isFinite(value)) throw new Error(`cannot write ${value} into a netlist`);
  return value.toPrecision(17);
};

/**
 * The netlist: node `n<i>` for the i-th distinct node name, ground `0` unused by the network (every
 * pressure is a source from ground). Each resistor is followed by a 0 V source, whose branch
 * current is the resistor's current: ngspice reports the current through a voltage source from
 * its + to its − terminal.
 */
export function netlistOf(circuit: Circuit): { netlist: string; nodeName: Map<string, string> } {
  const nodeName = new Map<string, string>();
  const name = (node: string) => {
    if (!nodeName.has(node)) nodeName.set(node, `n${nodeName.size + 1}`);
    return nodeName.get(node)!;
  };
  const lines = [`* ${circuit.title}`];
  circuit.resistors.forEach((r, i) => {
    lines.push(`r${i + 1} ${name(r.a)} m${i + 1} ${number(r.resistance * FLOW_PER_AMPERE)}`);
    lines.push(`vm${i + 1} m${i + 1} ${name(r.b)} dc 0`);
  });
  circuit.pressures.forEach((p, i) => lines.push(`vp${i + 1} ${name(p.node)} 0 dc ${number(p.pressure)}`));
  // A current source pushes its current from the + node through itself to the − node.
  circuit.injections.forEach((q, i) => lines.push(`iq${i + 1} 0 ${name(q.node)} dc ${number(q.flow / FLOW_PER_AMPERE)}`));
  lines.push('.control', 'set numdgt=15', 'op', 'print all', 'quit 0', '.endc', '.end', '');
  return { netlist: lines.join('\n'), nodeName };
}

/** Solves the circuit's DC operating point with `ngspice -b` and reads every value back. */
export function ngspiceOperatingPoint(circuit: Circuit): OperatingPoint {
  if (!ngspiceAvailable()) {
    throw new Error('ngspice is not installed (Debian: apt-get install ngspice); the single-phase reference checks need it');
  }
  const { netlist, nodeName } = netlistOf(circuit);
  const dir = mkdtempSync(join(tmpdir(), 'stratiflow-ngspice-'));
  try {
    const file = join(dir, 'network.cir');
    writeFileSync(file, netlist);
    const run = spawnSync('ngspice', ['-b', file], { encoding: 'utf8', cwd: dir, timeout: 60_000 });
    const output = `${run.stdout ?? ''}\n${run.stderr ?? ''}`;
    const values = new Map<string, number>();
    for (const match of output.matchAll(/^\s*([\w#()]+)\s*=\s*([-+]?\d[\d.]*(?:e[-+]?\d+)?)\s*$/gim)) {
      values.set(match[1]!.toLowerCase(), Number(match[2]));
    }
    const read = (key: string) => {
      const value = values.get(key);
      if (value === undefined || !Number.isFinite(value)) {
        throw new Error(`ngspice did not report ${key} (exit status ${run.status}):\n${output}\n--- netlist ---\n${netlist}`);
      }
      return value;
    };
    const pressure = new Map<string, number>();
    for (const [node, spiceName] of nodeName) pressure.set(node, read(spiceName));
    const flow = circuit.resistors.map((_, i) => read(`vm${i + 1}#branch`) * FLOW_PER_AMPERE);
    return { pressure, flow, netlist };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
