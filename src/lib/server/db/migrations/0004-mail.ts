// Alarm e-mail: who follows which line or product, each person's digest setting, and the mail
// queue. The queue is a table (not memory) so mail survives restarts, is written in the same
// transaction as the alarm that causes it (and so goes out only after that commits), and can be
// drained by any number of app instances (FOR UPDATE SKIP LOCKED). Alarm facts are copied into the
// payload: the queue holds no foreign key into the control-chart tables.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		-- 0 = one e-mail per alarm; N = at most one message per N minutes, collecting every alarm since.
		ALTER TABLE users ADD COLUMN alarm_digest_minutes integer NOT NULL DEFAULT 0
			CHECK (alarm_digest_minutes BETWEEN 0 AND 1440);

		CREATE TABLE subscriptions (
			id bigserial PRIMARY KEY,
			user_id bigint NOT NULL REFERENCES users (id) ON DELETE CASCADE,
			scope text NOT NULL CHECK (scope IN ('line', 'product')),
			line_id bigint REFERENCES lines (id) ON DELETE CASCADE,
			product_id bigint REFERENCES products (id) ON DELETE CASCADE,
			created_at timestamptz NOT NULL DEFAULT now(),
			CHECK ((scope = 'line' AND line_id IS NOT NULL AND product_id IS NULL)
				OR (scope = 'product' AND product_id IS NOT NULL AND line_id IS NULL))
		);
		-- One subscription per person and target; the indexes also serve "who follows this line/product".
		CREATE UNIQUE INDEX subscriptions_line_key ON subscriptions (line_id, user_id) WHERE scope = 'line';
		CREATE UNIQUE INDEX subscriptions_product_key ON subscriptions (product_id, user_id) WHERE scope = 'product';
		CREATE INDEX subscriptions_user_idx ON subscriptions (user_id);

		CREATE TABLE mail_queue (
			id bigserial PRIMARY KEY,
			user_id bigint REFERENCES users (id) ON DELETE CASCADE,
			to_address text NOT NULL,
			-- 'alarm': one alarm, due at once; 'digest': alarms collected until due_at.
			kind text NOT NULL CHECK (kind IN ('alarm', 'digest')),
			payload jsonb NOT NULL,
			created_at timestamptz NOT NULL DEFAULT now(),
			due_at timestamptz NOT NULL,
			sent_at timestamptz,
			attempts integer NOT NULL DEFAULT 0,
			last_error text
		);
		-- The sender's scan: unsent rows by due time (sent rows drop out of the index).
		CREATE INDEX mail_queue_due_idx ON mail_queue (due_at) WHERE sent_at IS NULL;
		CREATE INDEX mail_queue_user_idx ON mail_queue (user_id, created_at);
	`);
};
