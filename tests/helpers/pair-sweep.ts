/**
 * The differential pair the run tests queue: two n-channel devices sharing a 20 nA tail, their gates split by a
 * swept `dv`. Small to elaborate, so a test's time goes to the run machinery it checks; `points` sets its size.
 */
export const pairSweep = (points: number) => `network split
param dv = 0
rail vdd = 1.8
rail gnd = 0
rail g1 = 0.7 + dv/2
rail g2 = 0.7 - dv/2
nfet m1 gate=g1 source=tail drain=vdd
nfet m2 gate=g2 source=tail drain=vdd
inject tail_sink from=tail to=gnd value=20n
probe ratio = current(m1) / current(m2)
sweep dv from -40m to 40m points ${points}
`;

/**
 * A differential pair with a biased tail device, swept over its gates' difference `dv` at `steps` (volts): the ratio
 * current(m1)/current(m2) is exp(κ·dv/U_T) while both stay saturated (C. Mead, Analog VLSI and Neural Systems, 1989).
 */
export const tailPair = (steps: number[]) => `network pair
param dv = 0
rail vdd = 1
rail gnd = 0
rail vb = 0.45
rail v1 = 0.6 + dv
rail v2 = 0.6
nfet tail gate=vb source=gnd drain=t
nfet m1 gate=v1 source=t drain=vdd
nfet m2 gate=v2 source=t drain=vdd
probe ratio = current(m1)/current(m2)
sweep dv values [${steps.join(", ")}]
`;
