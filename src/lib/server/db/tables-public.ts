/** Row types of the tables in `public`; see ./tables.ts. */
import type { Int8 } from './tables';

export interface BillingEventRow {
	id: Int8;
	stripe_event_id: string;
	type: string;
	event_created_at: Date;
	shop_id: Int8 | null;
	outcome: string;
	note: string;
	payload: unknown;
	received_at: Date;
}

export interface BillingInvoiceRow {
	id: Int8;
	shop_id: Int8;
	stripe_invoice_id: string;
	number: string;
	status: string;
	currency: string;
	amount_due: number;
	amount_paid: number;
	period_start: Date | null;
	period_end: Date | null;
	hosted_url: string | null;
	issued_at: Date;
	event_created_at: Date;
}

export interface EmailLogRow {
	id: Int8;
	shop_id: Int8 | null;
	to_address: string;
	subject: string;
	kind: string;
	dedupe_key: string | null;
	provider_message_id: string | null;
	sent_at: Date;
}

export interface InvitationRow {
	id: Int8;
	shop_id: Int8;
	email: string;
	role: string;
	token_hash: string;
	invited_by: Int8 | null;
	expires_at: Date;
	accepted_at: Date | null;
	revoked_at: Date | null;
	created_at: Date;
}

export interface MembershipRow {
	id: Int8;
	user_id: Int8;
	shop_id: Int8;
	role: string;
	created_at: Date;
	digest_opt_out: boolean;
}

export interface PasswordResetRow {
	id: Int8;
	user_id: Int8;
	token_hash: string;
	expires_at: Date;
	used_at: Date | null;
	created_at: Date;
}

export interface ShopExportRow {
	id: Int8;
	shop_id: Int8;
	requested_by: Int8;
	requested_at: Date;
	status: string;
	progress: number;
	file_name: string | null;
	size_bytes: Int8 | null;
	token_hash: string | null;
	finished_at: Date | null;
	expires_at: Date | null;
	error: string | null;
}

export interface ShopLifecycleLogRow {
	id: Int8;
	at: Date;
	shop_id: Int8;
	shop_slug: string;
	action: string;
	actor_user_id: Int8 | null;
	actor_email: string;
	detail: unknown;
}

export interface ShopRow {
	id: Int8;
	slug: string;
	name: string;
	schema_name: string | null;
	time_zone: string;
	created_at: Date;
	plan: string | null;
	subscription_status: string;
	trial_ends_at: Date;
	stripe_customer_id: string | null;
	stripe_subscription_id: string | null;
	current_period_end: Date | null;
	cancel_at_period_end: boolean;
	past_due_since: Date | null;
	billing_state_at: Date | null;
	check_hour: number;
	readback_hours: number;
	default_units: string;
	check_policy: unknown;
	/** The shop's wear limit in mm; null = our default (issue 20). */
	wear_limit_mm: string | null;
	deletion_requested_at: Date | null;
	deletion_requested_by: Int8 | null;
	purge_after: Date | null;
	purged_at: Date | null;
	first_steps_dismissed_at: Date | null;
}

/** public.shop_servers: which PostgreSQL server holds a shop's schema (docs/DEPLOYMENT.md). */
export interface ShopServerRow {
	shop_id: Int8;
	server: string;
	moving_to: string | null;
	moving_since: Date | null;
	moved_from: string | null;
	updated_at: Date;
}

export interface UserRow {
	id: Int8;
	email: string;
	name: string;
	password_hash: string | null;
	created_at: Date;
	session_generation: number;
}

/** Every public table by its name in `public`. */
export interface PublicTables {
	billing_events: BillingEventRow;
	billing_invoices: BillingInvoiceRow;
	email_log: EmailLogRow;
	invitations: InvitationRow;
	memberships: MembershipRow;
	password_resets: PasswordResetRow;
	shop_exports: ShopExportRow;
	shop_lifecycle_log: ShopLifecycleLogRow;
	shop_servers: ShopServerRow;
	shops: ShopRow;
	users: UserRow;
}
