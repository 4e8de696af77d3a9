/**
 * The database's row types, in one place: what a `select *` of each table gives back through
 * node-postgres. Shop tables live in every `shop_<id>` schema (reached through `withShop`, so
 * their names are bare: `trx('tools')`); public tables are named `public.<table>`.
 *
 * Exported interfaces rather than Knex's `knex/types/tables` augmentation: the augmentation types
 * every `knex('<name>')` call in the program at once, keyed by a bare table name, while our shop
 * tables have the same bare names in every shop schema and many queries select, join and alias
 * columns that a whole-row type does not describe. Ask for a row type where it helps:
 * `trx<ToolRow>('tools')`, or `Pick<ToolRow, 'id' | 't_number'>` for a narrower select.
 *
 * How node-postgres hands values over (no type parsers are set): int8 (bigint, every id) and
 * numeric come back as strings (a number may go in); integer and smallint as numbers; timestamps
 * and dates as `Date`; jsonb parsed. Convert with `Number()` where a page needs a number.
 *
 * A migration that adds or changes a column changes its interface here in the same commit
 * (DEVELOPERS.md, "Row types").
 */

/** int8 columns, ids included: a string when read (it may pass 2^53), a number may be written. */
export type Int8 = string | number;
/** numeric columns: a string when read (no precision lost), a number may be written. */
export type Numeric = string | number;

export type * from './tables-shop';
export type * from './tables-public';
