import { changeFeed } from '../db/change-feed';
import { withShop, type ShopRef } from '../db/tenant';
import { fleetBoard } from './board';
import { createBoardCache, type BoardBytes, type BoardCache } from './board-cache';

let cache: BoardCache | undefined;
const utf8 = new TextEncoder();

/**
 * The fleet board of a shop as the JSON its API sends (UTF-8 bytes), from this process's board cache
 * (./board-cache.ts: dropped on every committed change to what the board reads, at most 5 s
 * old). FLEET_BOARD_CACHE=off builds it on every call (the benchmark's uncached run).
 * The caller has already checked the member's access (requireMember).
 */
export function fleetBoardJson(shop: ShopRef): Promise<BoardBytes> {
	// Kept as bytes: encoding 70 kB of JSON per response cost a tenth of the CPU of a cached hit.
	const build = async () =>
		utf8.encode(JSON.stringify(await withShop(shop, (trx) => fleetBoard(trx))));
	if (process.env.FLEET_BOARD_CACHE === 'off') return build();
	cache ??= createBoardCache({ feed: changeFeed() });
	return cache.get(shop.schemaName, build);
}
