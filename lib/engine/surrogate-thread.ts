import { surrogateTaus } from './surrogates';
import { answerRange } from './worker-pool';

// Body of one surrogate worker thread (see surrogate-pool.ts): the taus of its range of surrogates. Started through
// surrogate-worker.mjs from source, or as the command line's bundled dist/surrogate-worker.mjs.
void answerRange(surrogateTaus);
