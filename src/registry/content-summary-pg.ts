/**
 * PostgreSQL twin of CONTENT_SUMMARY in records.ts: what a version's record needs of its content (has a table
 * and its first and last wavelength, the model and its range, the KK verdict), cut out by the database so that
 * listing a material's versions never ships whole tables. The result is JSON text of the same shape as SQLite's
 * `json_object(…)` gives, read with JSON.parse as a VersionContent.
 *
 * `content` is text holding canonical JSON (schema-pg.ts); it is cast to `json`, not `jsonb`, so numbers keep
 * their text as stored. PostgreSQL's `->` keeps a number a JSON number (SQLite's `->>` turns it into an SQL
 * value that json_array writes back as a number), and `-> -1` is the last element of an array (SQLite's `[#-1]`).
 */
import { sql } from 'drizzle-orm';
import { materialVersions } from './schema-pg.ts';

const c = sql`(${materialVersions.content}::json)`;

export const CONTENT_SUMMARY_PG = sql<string>`json_build_object(
  'table', CASE WHEN json_typeof(${c} -> 'table') = 'object'
    THEN json_build_object('wavelengthNm', json_build_array(${c} -> 'table' -> 'wavelengthNm' -> 0, ${c} -> 'table' -> 'wavelengthNm' -> -1), 'n', json_build_array(), 'k', json_build_array()) END,
  'fit', CASE WHEN json_typeof(${c} -> 'fit') = 'object'
    THEN json_build_object('model', ${c} -> 'fit' ->> 'model', 'range_nm', ${c} -> 'fit' -> 'range_nm', 'parameters', json_build_object()) END,
  'kk', CASE WHEN json_typeof(${c} -> 'kk') = 'object' THEN json_build_object('verdict', ${c} -> 'kk' ->> 'verdict') END)::text`;
