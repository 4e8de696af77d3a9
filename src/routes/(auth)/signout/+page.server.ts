import { redirect } from '@sveltejs/kit';
import { signOut } from '../../../auth';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async () => redirect(303, '/');

export const actions: Actions = { default: signOut };
