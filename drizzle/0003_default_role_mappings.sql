-- The default group -> role mapping (shared/roles.ts DEFAULT_ROLE_MAPPINGS). Idempotent: rows
-- that an admin has since removed are not put back by later migrations, only by this first one.
INSERT INTO role_mappings ("group", role) VALUES
  ('lw-meteorologists', 'meteorologist'),
  ('lw-traders', 'trader'),
  ('lw-risk', 'risk'),
  ('lw-admins', 'admin')
ON CONFLICT DO NOTHING;
