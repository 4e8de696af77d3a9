import { promisify } from 'node:util';
import { gzip } from 'node:zlib';
import { config } from '../config';
import { changeFeed, perProcess } from '../db/change-feed';
import { HOME_SERVER } from '../db/servers';
import { withShop, type ShopRef } from '../db/tenant';
import { boardAges } from '../shops/settings';
import { fleetBoard } from './board';
import { createBoardCache } from './board-cache';

type Bytes = Uint8Array<ArrayBuffer>;

/** A board ready to send: its JSON as UTF-8, and the same gzipped for clients that accept it. */
export interface PreparedBoard {
	json: Bytes;
	gzip: Bytes;
}

const utf8 = new TextEncoder();
const gzipAsync = promisify(gzip);

/**
 * The fleet board of a shop as its API sends it, from this process's board cache
 * (./board-cache.ts: dropped on every committed change to what the board reads, at most 5 s
 * old). Kept as bytes, plain and gzipped once per build: encoding 70 kB of JSON for every
 * response cost a tenth of a cached request's CPU, and a browser polling the board takes
 * ~4 kB gzipped instead of 70 kB. FLEET_BOARD_CACHE=off builds it on every call (the
 * benchmark's uncached run). The caller has already checked the member's access.
 */
export function preparedFleetBoard(shop: ShopRef): Promise<PreparedBoard> {
	const build = async (): Promise<PreparedBoard> => {
		const json = utf8.encode(
			JSON.stringify(
				await withShop(shop, async (trx) =>
					fleetBoard(trx, new Date(), await boardAges(trx, shop.id))
				)
			)
		);
		const zipped = await gzipAsync(json);
		return {
			json,
			gzip: new Uint8Array(zipped.buffer, zipped.byteOffset, zipped.byteLength) as Bytes
		};
	};
	// A shop on another database server announces its changes there, and the change feed
	// listens at home only (docs/DEPLOYMENT.md): its board is built on every call.
	if (!config.fleetBoardCache || (shop.server ?? HOME_SERVER) !== HOME_SERVER) return build();
	const cache = perProcess('fleetBoards', () =>
		createBoardCache<PreparedBoard>({ feed: changeFeed() })
	);
	return cache.get(shop.schemaName, build);
}
