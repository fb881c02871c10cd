/** The benchmark networks, generated as .runnel text with for loops (shared by bench/run.ts and bench/api-runs.ts). */

/** Diffuser grid n×n (bench contract): lateral nfets between 4-neighbours on gate rail gh, an output nfet at every node (gate gv, drain on a 1 V rail), one inject at the centre. */
export function gridText(name: string, n: number, extra = "", injectValue = "1n"): string {
  const c = Math.floor(n / 2);
  return `network ${name}
param vh = 0.7
param vv = 0.6
param iin = ${injectValue}
rail gh = vh
rail gv = vv
rail vd = 1
rail gnd = 0
for i in 0..${n - 1} {
  for j in 0..${n - 1} {
    nfet o{i}_{j} gate=gv source=n{i}_{j} drain=vd
  }
}
for i in 0..${n - 1} {
  for j in 0..${n - 2} {
    nfet h{i}_{j} gate=gh source=n{i}_{j} drain=n{i}_{j+1}
    nfet v{j}_{i} gate=gh source=n{j}_{i} drain=n{j+1}_{i}
  }
}
inject spot from=n${c}_${c} to=gnd value=iin
${extra}`;
}

export function chainText(n: number): string {
  return `network chain
rail gh = 0.7
rail gv = 0.6
rail vd = 1
rail gnd = 0
for k in 0..${n - 1} {
  nfet o{k} gate=gv source=n{k} drain=vd
}
for k in 0..${n - 2} {
  nfet h{k} gate=gh source=n{k} drain=n{k+1}
}
inject spot from=n${Math.floor(n / 2)} to=gnd value=1n
`;
}

/** A 1,000-branch mirror bank: a pfet reference into a diode nfet; each branch an nfet copy into a diode-connected pfet load. */
export function mirrorText(branches: number): string {
  return `network mirror_bank
rail vdd = 1.8
rail gnd = 0
rail gp = 1.4
pfet ref gate=gp source=vdd drain=x well=vdd
nfet diode gate=x source=gnd drain=x
for k in 0..${branches - 1} {
  nfet copy{k} gate=x source=gnd drain=y{k} w=(1 + k - 4*floor(k/4)) * 1u
  pfet load{k} gate=y{k} source=vdd drain=y{k} well=vdd
}
`;
}

/**
 * An n × n mesh of lateral nfets (gate on a rail) with a diode-connected nfet at every node and 1 nA pushed into
 * each: a gate on an internal node at every node, so Newton solves it (a Jacobian with the mesh's pattern).
 */
export function meshText(n: number): string {
  return `network diode_mesh
rail vdd = 1.8
rail gnd = 0
rail gh = 0.75
for i in 0..${n - 1} {
  for j in 0..${n - 2} {
    nfet h{i}_{j} gate=gh source=n{i}_{j} drain=n{i}_{j+1}
    nfet v{j}_{i} gate=gh source=n{j}_{i} drain=n{j+1}_{i}
  }
}
for i in 0..${n - 1} {
  for j in 0..${n - 1} {
    nfet d{i}_{j} gate=n{i}_{j} source=gnd drain=n{i}_{j}
    inject p{i}_{j} from=vdd to=n{i}_{j} value=1n
  }
}
`;
}
