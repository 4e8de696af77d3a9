/**
 * Who is doing something: the signed-in member behind a write, for the rows it records
 * (`taken_by`, `created_by`…) and the audit log.
 */
export interface Actor {
	id: number;
	email: string;
	/** The client's address, for the audit log (set by actions that have the request). */
	ip?: string;
}

/** An actor whose name others see (an invitation says who sent it). */
export interface NamedActor extends Actor {
	name: string;
}
