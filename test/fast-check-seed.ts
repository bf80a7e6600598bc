/**
 * Property tests draw from one fixed seed so a run reproduces exactly (CI and a laptop see the same cases);
 * FC_SEED=<n> explores other cases on purpose.
 */
import fc from 'fast-check';

fc.configureGlobal({ seed: Number(process.env.FC_SEED ?? 20261202) });
