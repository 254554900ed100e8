-- Announce changes to every server instance listening on this database (server/services/notified-cache.ts), so cached
-- answers are dropped: NOTIFY in the changing transaction, delivered only after it commits, once per payload and
-- transaction (identical payloads fold). Statement-level triggers read the changed rows as transition tables, so a
-- 1,000-row insert costs one small query, not 1,000 calls.
--
-- halfmark_desk: a lab's runs list changed (runs, readings); payload the lab id, or '*' for every lab.
CREATE FUNCTION halfmark_desk_rows_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP IN ('INSERT', 'UPDATE') THEN
    PERFORM pg_notify('halfmark_desk', s.lab_id::text) FROM (SELECT DISTINCT lab_id FROM new_rows) s;
  END IF;
  IF TG_OP IN ('UPDATE', 'DELETE') THEN
    PERFORM pg_notify('halfmark_desk', s.lab_id::text) FROM (SELECT DISTINCT lab_id FROM old_rows) s;
  END IF;
  RETURN NULL;
END
$$;--> statement-breakpoint
CREATE TRIGGER runs_desk_insert AFTER INSERT ON runs REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_desk_rows_changed();--> statement-breakpoint
CREATE TRIGGER runs_desk_update AFTER UPDATE ON runs REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_desk_rows_changed();--> statement-breakpoint
CREATE TRIGGER runs_desk_delete AFTER DELETE ON runs REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_desk_rows_changed();--> statement-breakpoint
CREATE TRIGGER readings_desk_insert AFTER INSERT ON readings REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_desk_rows_changed();--> statement-breakpoint
CREATE TRIGGER readings_desk_update AFTER UPDATE ON readings REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_desk_rows_changed();--> statement-breakpoint
CREATE TRIGGER readings_desk_delete AFTER DELETE ON readings REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_desk_rows_changed();--> statement-breakpoint
--
-- halfmark_auth: what the access check of a user's requests reads changed (session, account, memberships, lab names);
-- payload the user id, or '*' for every user.
CREATE FUNCTION halfmark_auth_user_rows_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP IN ('INSERT', 'UPDATE') THEN
    PERFORM pg_notify('halfmark_auth', s.user_id::text) FROM (SELECT DISTINCT user_id FROM new_rows) s;
  END IF;
  IF TG_OP IN ('UPDATE', 'DELETE') THEN
    PERFORM pg_notify('halfmark_auth', s.user_id::text) FROM (SELECT DISTINCT user_id FROM old_rows) s;
  END IF;
  RETURN NULL;
END
$$;--> statement-breakpoint
CREATE TRIGGER sessions_auth_update AFTER UPDATE ON sessions REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_auth_user_rows_changed();--> statement-breakpoint
CREATE TRIGGER sessions_auth_delete AFTER DELETE ON sessions REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_auth_user_rows_changed();--> statement-breakpoint
CREATE TRIGGER memberships_auth_insert AFTER INSERT ON memberships REFERENCING NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_auth_user_rows_changed();--> statement-breakpoint
CREATE TRIGGER memberships_auth_update AFTER UPDATE ON memberships REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_auth_user_rows_changed();--> statement-breakpoint
CREATE TRIGGER memberships_auth_delete AFTER DELETE ON memberships REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_auth_user_rows_changed();--> statement-breakpoint
-- A user row: the account (disabled, e-mail, name) for auth; the display name also shows in every lab's runs list.
CREATE FUNCTION halfmark_users_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'UPDATE' THEN
    PERFORM pg_notify('halfmark_auth', s.id::text) FROM (SELECT DISTINCT id FROM new_rows) s;
    IF EXISTS (SELECT 1 FROM new_rows n JOIN old_rows o ON o.id = n.id WHERE n.display_name IS DISTINCT FROM o.display_name) THEN
      PERFORM pg_notify('halfmark_desk', '*');
    END IF;
  END IF;
  IF TG_OP = 'DELETE' THEN
    PERFORM pg_notify('halfmark_auth', s.id::text) FROM (SELECT DISTINCT id FROM old_rows) s;
  END IF;
  RETURN NULL;
END
$$;--> statement-breakpoint
CREATE TRIGGER users_changed_update AFTER UPDATE ON users REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_users_changed();--> statement-breakpoint
CREATE TRIGGER users_changed_delete AFTER DELETE ON users REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_users_changed();--> statement-breakpoint
-- A lab's name or demo mark is part of every member's access check.
CREATE FUNCTION halfmark_labs_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  -- Separate statements: a DELETE trigger has no new_rows to name.
  IF TG_OP = 'DELETE' THEN
    PERFORM pg_notify('halfmark_auth', '*');
  ELSIF EXISTS (
    SELECT 1 FROM new_rows n JOIN old_rows o ON o.id = n.id WHERE n.name IS DISTINCT FROM o.name OR n.is_demo IS DISTINCT FROM o.is_demo
  ) THEN
    PERFORM pg_notify('halfmark_auth', '*');
  END IF;
  RETURN NULL;
END
$$;--> statement-breakpoint
CREATE TRIGGER labs_changed_update AFTER UPDATE ON labs REFERENCING OLD TABLE AS old_rows NEW TABLE AS new_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_labs_changed();--> statement-breakpoint
CREATE TRIGGER labs_changed_delete AFTER DELETE ON labs REFERENCING OLD TABLE AS old_rows
  FOR EACH STATEMENT EXECUTE FUNCTION halfmark_labs_changed();
