/** The parts plant of the parts tests: a model and two files of parts (test/parts*.test.ts). */
import { dedent } from './model';

export const ROOT = 'mem:/plant/model.poise';
export const LIB = 'mem:/plant/lib/tank.poise';
export const PIPE = 'mem:/plant/lib/pipe.poise';

export const tankFile = dedent(`
  # a tank drained by gravity through a fixed outlet
  part tank:
    const area = 1.2 [m^2]
    const k = 0.01 [m^2.5/s]
    input inflow [m^3/s]
    state level [m]
    var outflow [m^3/s]
    output level_cm [cm] = level
    area*level' = inflow - outflow
    outflow = k*sqrt(level)
`);

export const pipeFile = dedent(`
  part pipe:
    const delay_volume = 0.05 [m^3]
    input q_in [m^3/s]
    state held [m^3]
    var q_out [m^3/s]
    held' = q_in - q_out
    q_out = q_in*held/delay_volume
`);

export const partsModel = dedent(`
  parts from "lib/tank.poise"
  parts pipe from "lib"
  const n = 3
  input feed [m^3/s]
  place tank as first with area = 2 [m^2], k = 0.02 [m^2.5/s]
  place pipe as link
  place tank as cell[1..n] with k = {0.010, 0.012, 0.015} [m^2.5/s]
  first.inflow = feed
  link.q_in = first.outflow
  cell[1].inflow = link.q_out
  each i in 2..n: cell[i].inflow = cell[i-1].outflow
  output total [m] = first.level + sum(each i in 1..n: cell[i].level)

  point nominal:
    feed = 0.006 [m^3/s]
    first.level ~ 0.1 [m]
    link.held ~ 0.05 [m^3]
    cell.level ~ 0.3 [m]
`);

