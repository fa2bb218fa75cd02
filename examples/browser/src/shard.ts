/** A training thread of the page: computes the shards the page's training worker hands it (@weft/optim). */
import { serveShardsInWorker } from '@weft/optim';

serveShardsInWorker(self as unknown as Parameters<typeof serveShardsInWorker>[0]);
