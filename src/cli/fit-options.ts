/**
 * The fit flags shared by `nkledger fit` and `nkledger import --fit`. addFitOptions adds them to a command; the
 * parsed flags (a FitOptionText) become FitOptions through the service layer's parseFitOptions, which the HTTP
 * API's fit fields go through too.
 */
import type { Command } from 'commander';
import { FIT_TARGETS } from '../service/fit-options.ts';

const collect = (value: string, previous: string[] = []) => [...previous, value];

export function addFitOptions(cmd: Command): Command {
  return cmd
    .option('--terms <N>', 'number of Sellmeier terms / oscillators for models that accept it')
    .option('--urbach', 'Cauchy: add the Urbach absorption tail')
    .option('--target <what>', `quantities fitted: ${FIT_TARGETS.join(', ')} (default nk: n and k; eps: ε1 and ε2)`)
    .option('--range <min:max>', 'fit only wavelengths in this window (nm)')
    .option('--fix <P=V>', 'hold parameter P fixed at V (repeatable)', collect)
    .option('--init <P=V>', 'start parameter P at V instead of the automatic guess (repeatable)', collect)
    .option('--bounds <P=LO:HI>', 'bounds of parameter P (repeatable)', collect)
    .option('--free <P>', 'fit a parameter the model fixes by default (Sellmeier A, Urbach Eb) (repeatable)', collect)
    .option('--starts <N>', 'number of starts: the automatic guess plus N − 1 random perturbations of it (default 1)')
    .option('--seed <N>', 'seed of the multi-start perturbations (default 1)')
    .option(
      '--weights <how>',
      'auto (default: the sigma columns, else the n/k noise ratio) or relative (σ ∝ |value|, for noise that grows with the value; see docs/fitting.md)',
    );
}
