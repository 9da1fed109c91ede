import type { LoggerFrame } from '../model/raw-message.js';

/**
 * Loggers whose messages say `synthetic: true` (the simulator marks every message so): a warning
 * the first time each is seen, and the list for the presence message. Simulated readings on a real
 * structure's topics could fake or hide its alarms, so they are never taken in silently.
 */
export class SyntheticLoggers {
  private readonly seen = new Set<string>();

  constructor(private readonly warn: (event: string, detail: Record<string, unknown>) => void) {}

  note(frame: LoggerFrame): void {
    if (frame.synthetic !== true || this.seen.has(frame.loggerId)) return;
    this.seen.add(frame.loggerId);
    this.warn('synthetic_data', {
      logger: frame.loggerId,
      reason: 'its messages say synthetic: true (simulated readings): results and alarms from them describe no real structure',
    });
  }

  /** Ids of the loggers seen sending synthetic messages, sorted. */
  list(): string[] {
    return [...this.seen].sort();
  }
}
