/**
 * A kysely plugin that lets the event loop turn after every query. better-sqlite3 answers
 * synchronously and kysely's promises resolve as microtasks, so a run of queries awaited one
 * after another (a refresh reads a dozen) would otherwise hold the loop from the first to the
 * last: with the plugin, requests waiting meanwhile are served between two queries, and the
 * loop is held at most as long as the longest single query.
 */
import { setImmediate } from 'node:timers/promises';
import type { KyselyPlugin, PluginTransformQueryArgs, PluginTransformResultArgs, QueryResult, RootOperationNode, UnknownRow } from 'kysely';

export const YIELD_AFTER_EACH_QUERY: KyselyPlugin = {
  transformQuery: (args: PluginTransformQueryArgs): RootOperationNode => args.node,
  transformResult: async (args: PluginTransformResultArgs): Promise<QueryResult<UnknownRow>> => {
    await setImmediate();
    return args.result;
  },
};
