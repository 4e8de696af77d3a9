import { describe, expect, it } from 'vitest';
import { auditTitle, describeAudit } from './audit-words';

describe('audit log in plain words', () => {
	it('titles known kinds and turns unknown codes into words', () => {
		expect(auditTitle('member.signed-in')).toBe('Signed in');
		expect(auditTitle('billing.payment-received')).toBe('Payment received');
		expect(auditTitle('tool.re-ground')).toBe('Tool re ground');
	});

	it('formats money with its currency, not raw cents', () => {
		expect(
			describeAudit('billing.payment-received', { invoice: 'F-0001', amount: 14900 }, 'UTC')
		).toBe('invoice: F-0001 · $149.00');
		expect(
			describeAudit('billing.payment-received', { amount: 4900, currency: 'eur' }, 'UTC')
		).toBe('€49.00');
	});

	it('names roles and hides internal ids', () => {
		expect(
			describeAudit('member.role-changed', { from: 'operator', to: 'lead', userId: 7 }, 'UTC')
		).toBe('from: Operator · to: Lead');
		expect(describeAudit('reading.recorded', { machineId: 3, readingId: 9 }, 'UTC')).toBe('');
	});
});
