import { bigint, customType, datetime } from 'drizzle-orm/mysql-core';

/** An auto-increment unsigned BIGINT primary key (MariaDB rejects drizzle's `serial()` SQL). */
export const idColumn = () => bigint('id', { mode: 'number', unsigned: true }).autoincrement().primaryKey();

/** A reference to another table's unsigned BIGINT id. */
export const refColumn = (name: string) => bigint(name, { mode: 'number', unsigned: true });

/** A UTC timestamp with milliseconds. */
export const timeColumn = (name: string) => datetime(name, { mode: 'date', fsp: 3 });

/** LONGBLOB holding raw bytes (uploaded originals, sample arrays); up to 4 GiB. */
export const longblob = customType<{ data: Buffer; driverData: Buffer }>({
  dataType() {
    return 'longblob';
  },
});

/**
 * A JSON column that reads back as parsed JSON on MariaDB too (where JSON is a LONGTEXT alias and
 * the driver hands back a string).
 */
export const jsonColumn = <T>(name: string) =>
  customType<{ data: T; driverData: string }>({
    dataType() {
      return 'json';
    },
    toDriver(value: T): string {
      return JSON.stringify(value);
    },
    fromDriver(value: unknown): T {
      return (typeof value === 'string' ? JSON.parse(value) : value) as T;
    },
  })(name);
