import type { AlarmTransition, ComponentFault } from '../types.js';
import { evaluate, type EngineContext } from './evaluate.js';
import { healthDescriptor, healthEvaluation } from './health-common.js';

/** Zone of the processor's own parts: they serve every zone of the structure. */
export const PROCESSOR_ZONE = 'processor';

/**
 * A component fault raises (or, with `failure` null, clears) the `component_fault` health alarm of
 * that component. The reason is in the action text, so the crew reads what failed. Mutates `ctx.state`.
 */
export function evaluateComponent(ctx: EngineContext, input: ComponentFault): AlarmTransition[] {
  if (!ctx.cfg.health.component_fault.enabled) return [];
  const d = healthDescriptor(ctx, 'component_fault', `p:${input.component}`, { kind: 'component', component: input.component },
    PROCESSOR_ZONE, `processor ${input.component}`, 'fault', '');
  if (input.failure !== null) d.action = `${d.action} Reported: ${input.failure}`;
  return evaluate(ctx, d, healthEvaluation(ctx, 'component_fault', input.failure !== null, input.atMs, null, null));
}
