/** Printed by `npm start` in development: where the app is and how to sign in to the demo. */
import { demoShops, DEMO_PASSWORD } from '../seeds/demo-data';

const url = process.env.ORIGIN ?? `http://127.0.0.1:${process.env.PORT ?? 5173}`;
const lines = [
	'',
	`Datumkeep is starting at ${url}`,
	'',
	`Demo sign-ins (password for all: ${DEMO_PASSWORD})`,
	...demoShops.flatMap((shop) => [
		`  ${shop.name}`,
		...shop.people.map((p) => `    ${p.role.padEnd(9)} ${p.email.padEnd(28)} ${p.name}`)
	]),
	'',
	`Sent e-mail (fake SES): ${url}/dev/mailbox (sign in: you see the mail sent to you)`,
	''
];
console.log(lines.join('\n'));
