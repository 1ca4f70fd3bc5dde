/**
 * The part of `pg` (node-postgres) Brinkwatch calls itself; Sequelize drives the rest. The package ships no types
 * and `@types/pg` is not installed, so this declares what is used (https://node-postgres.com/apis/client,
 * https://github.com/brianc/node-postgres/tree/master/packages/pg-types).
 */
declare module 'pg' {
  export interface QueryResult<R> {
    rows: R[];
    rowCount: number | null;
  }
  export interface PoolClient {
    query<R = Record<string, unknown>>(sql: string, values?: unknown[]): Promise<QueryResult<R>>;
  }
  export class Client implements PoolClient {
    constructor(connectionString?: string | { connectionString: string });
    connect(): Promise<void>;
    on(event: 'error', listener: (error: Error) => void): this;
    end(): Promise<void>;
    query<R = Record<string, unknown>>(sql: string, values?: unknown[]): Promise<QueryResult<R>>;
  }
  export const types: {
    builtins: Record<'INT8' | 'NUMERIC' | 'TIMESTAMPTZ' | 'JSON', number>;
    setTypeParser(oid: number, parse: (value: string) => unknown): void;
  };
  const pg: { Client: typeof Client; types: typeof types };
  export default pg;
}
