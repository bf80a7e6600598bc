// Worker entry while nkledger runs from its TypeScript sources (bin/nkledger.js, tests): a worker
// thread does not inherit the tsx loader of the thread that made it, so register it here first.
import { register } from 'tsx/esm/api';

register();
const worker = await import('./compute-worker.ts');
export default worker.default;
