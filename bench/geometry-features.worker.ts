/**
 * Worker for the geometry benchmark's sharded feature stage: measures one shard of the features of the
 * `OpenRegions` it is sent (lib/geometry stays free of threads; the caller shards, see FeatureOptions.shard).
 */
import { parentPort } from 'node:worker_threads';
import { featuresFromRegions, type OpenRegions } from '../lib/geometry';

parentPort?.on('message', (msg: { regions: OpenRegions; index: number; count: number }) => {
  const features = featuresFromRegions(msg.regions, { shard: { index: msg.index, count: msg.count } });
  parentPort?.postMessage(features);
});
