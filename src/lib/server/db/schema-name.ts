/** Shop schemas are named `shop_<id>`; anything else is refused before it reaches SQL. */
const SHOP_SCHEMA = /^shop_[1-9][0-9]{0,18}$/;

export function shopSchemaName(shopId: number | string): string {
	const name = `shop_${shopId}`;
	assertShopSchema(name);
	return name;
}

export function assertShopSchema(name: string): void {
	if (!SHOP_SCHEMA.test(name)) throw new Error(`"${name}" is not a shop schema name`);
}
