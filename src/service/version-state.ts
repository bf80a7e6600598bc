/**
 * The lifecycle status of `slug@N` from one prepared statement, for hot read paths (the API's cache of
 * rendered answers) that must learn cheaply whether a version is still approved or has been retired
 * since. The hash of slug@N needs no re-check: content and numbers are immutable
 * (drizzle/0001_immutability.sql). Full resolution with messages stays in resolveRow (versions.ts).
 */
export { versionStatus } from '../registry/hot-reads.ts';
