/**
 * What src/fit/lm.ts relies on in ml-levenberg-marquardt 5.1 beyond its documented options (read in
 * node_modules/ml-levenberg-marquardt/src/levenberg_marquardt.ts; "reference library"): the model callback
 * receives the library's own parameter array, so resetting it in the callback moves the library back
 * (how lm.ts vetoes a step to a non-finite model), and the Jacobian is asked for at the point the library
 * stands on, after the model was evaluated there.
 */
import { levenbergMarquardt } from 'ml-levenberg-marquardt';
import { describe, expect, it } from 'vitest';

describe('ml-levenberg-marquardt 5.1 behaviour lm.ts depends on (reference library)', () => {
  it('a parameter array reset inside the model callback is where the library continues from', () => {
    const x = [0, 1, 2, 3, 4, 5];
    const y = x.map((t) => 2 * t + 1);
    const seen: number[][] = [];
    const jacobianAt: number[][] = [];
    let vetoed = false;
    const result = levenbergMarquardt(
      { x, y },
      (p) => {
        // veto the first trial step: put the library back on its start point
        if (!vetoed && seen.length > 0 && (p[0] !== 0.5 || p[1] !== 0.5)) {
          vetoed = true;
          p[0] = 0.5;
          p[1] = 0.5;
        }
        seen.push(p.slice());
        return (t) => p[0] * t + p[1];
      },
      {
        initialValues: [0.5, 0.5],
        damping: 1e-2,
        maxIterations: 20,
        errorTolerance: 1e-12,
        jacobianFunction: (p) => {
          jacobianAt.push(p.slice());
          return (t) => [t, 1];
        },
      },
    );
    expect(vetoed).toBe(true);
    // the second Jacobian is taken at the reset point, not at the vetoed trial
    expect(jacobianAt[0]).toEqual([0.5, 0.5]);
    expect(jacobianAt[1]).toEqual([0.5, 0.5]);
    // and every Jacobian point is a point the model was evaluated at just before
    for (const p of jacobianAt) expect(seen.some((q) => q[0] === p[0] && q[1] === p[1])).toBe(true);
    expect(result.parameterValues[0]).toBeCloseTo(2, 6);
    expect(result.parameterValues[1]).toBeCloseTo(1, 6);
  });
});
