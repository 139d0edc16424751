/**
 * Entry of the thread that parses a CSV capture ahead of its reader
 * (see `readCaptureCsvAhead`).
 */
import { workerData } from 'node:worker_threads';
import { type ParseAheadData, parseAhead } from './parse-ahead.js';

parseAhead(workerData as ParseAheadData);
