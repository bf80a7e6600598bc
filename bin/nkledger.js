#!/usr/bin/env node
// Entry point of the `nkledger` command: registers tsx so the TypeScript sources run as they are.
import { register } from 'tsx/esm/api';

register();
await import('../src/cli/main.ts');
