import { z } from 'zod';

/** Deleting a shop: the owner types the shop's address (its URL slug) to confirm. */
export const deleteShopSchema = z.object({
	confirmSlug: z.string().trim().min(1, 'Type the shop address to confirm.')
});
