import type { ComponentFault } from '../alarms/types.js';
import type { ComponentFaultEntry } from './presence.js';

/**
 * The processor's parts failing now, for the presence message and `status`: every component fault
 * the live job reports (database, broker, spool, capture, webhooks) as it raises or clears. Kept
 * apart from the alarm engine on purpose: the status must say it even where the `component_fault`
 * health check is switched off. Bounded by the number of components.
 */
export class ComponentFaultRegister {
  private readonly failing = new Map<string, { failure: string; sinceMs: number }>();

  note(f: ComponentFault): void {
    if (f.failure === null) this.failing.delete(f.component);
    else {
      // The first report of a fault sets `since`; a later one only updates the reason.
      const sinceMs = this.failing.get(f.component)?.sinceMs ?? f.atMs;
      this.failing.set(f.component, { failure: f.failure, sinceMs });
    }
  }

  /** The failing components, by name. */
  list(): ComponentFaultEntry[] {
    return [...this.failing].sort(([a], [b]) => a.localeCompare(b))
      .map(([component, f]) => ({ component, failure: f.failure, since: new Date(f.sinceMs).toISOString() }));
  }
}
