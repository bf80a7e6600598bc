-- Custom SQL migration (drizzle-kit generate --custom): settings are kept in ONE table, registry_settings
-- (key -> JSON value), for the registry rules and the HTTP API alike. Carry the values stored so far in the
-- API's api_settings over before 0004 drops that table; keys never overlapped (allow_self_approval lived
-- only in registry_settings), and a key already present keeps its value.
INSERT OR IGNORE INTO `registry_settings` (`key`, `value`, `updated_by`, `updated_at`)
SELECT `key`, `value_json`, `updated_by`, `updated_at` FROM `api_settings`;
