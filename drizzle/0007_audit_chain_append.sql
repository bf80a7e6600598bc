-- Custom SQL migration (drizzle-kit generate --custom): every audit event appended from now on is a link of
-- the hash chain (src/registry/chain.ts): it carries its own hash and the hash of the event before it, so
-- an insert that skips the chain or branches off an older event is refused by SQLite itself. The genesis
-- event (prev_hash NULL) is accepted only while no chained event exists yet. nkledger appends the genesis
-- right after this migration, from src/registry/open.ts, because SQL cannot compute a SHA-256.
CREATE TRIGGER `audit_log_chain_append`
BEFORE INSERT ON `audit_log`
WHEN NEW.`hash` IS NULL
  OR NEW.`prev_hash` IS NOT (SELECT `hash` FROM `audit_log` ORDER BY `id` DESC LIMIT 1)
BEGIN
  SELECT RAISE(ABORT, 'nkledger: an audit event must carry its hash and extend the chain at its head');
END;
