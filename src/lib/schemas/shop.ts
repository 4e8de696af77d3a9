import { signUpSchema } from './auth';

/** A signed-in person starting another shop: only the shop's fields. */
export const newShopSchema = signUpSchema.pick({ shopName: true, shopSlug: true });
