import { type MessagePort, receiveMessageOnPort } from 'node:worker_threads';

/**
 * Posts a message and counts it in `counters[slot]`, waking a thread that waits for it
 * in {@link receiveCounted}. The count follows the post, so a count ahead of the
 * receiver's means its message is already queued.
 * @example postCounted(port, counters, POSTED, { kind: 'end' });
 */
export function postCounted(port: MessagePort, counters: Int32Array, slot: number, message: unknown): void {
  port.postMessage(message);
  Atomics.add(counters, slot, 1);
  Atomics.notify(counters, slot);
}

/**
 * The next message on `port`, waiting (blocking this thread) until one is posted with
 * {@link postCounted}; `received` is how many this thread has taken before. A
 * synchronous caller thus takes another thread's messages without returning to its
 * event loop.
 * @example const m = receiveCounted(port, counters, POSTED, received++);
 */
export function receiveCounted(port: MessagePort, counters: Int32Array, slot: number, received: number): unknown {
  let next = receiveMessageOnPort(port);
  while (next === undefined) {
    Atomics.wait(counters, slot, received);
    next = receiveMessageOnPort(port);
  }
  return next.message;
}
