/** Entry of the compute worker threads (compute-pool.ts): one task in, one outcome out. */
import { runComputeTask, type ComputeOutcome, type ComputeTask } from './compute.ts';

export default function computeWorker(task: ComputeTask): ComputeOutcome {
  return runComputeTask(task);
}
