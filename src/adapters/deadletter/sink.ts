import type { DeadLetter } from '../../model/rejection.js';

/** Where dead letters go. `write` resolves once the record is durable (appended, or PUBACKed). */
export interface DeadLetterSink {
  write(deadLetter: DeadLetter): Promise<void>;
}
