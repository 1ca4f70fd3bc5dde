import { answerRange } from '@/lib/engine/worker-pool';
import { calibrateChunk } from './calibration';

// Body of one calibration worker thread (see pool.ts): the replays of its range of replicates, with progress.
void answerRange(calibrateChunk);
