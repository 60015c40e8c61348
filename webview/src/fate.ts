/** Fates are shown as icon + word, never by colour alone. */
import type { Fate } from '../../extension/core/log/types';
import { h } from './dom';

export const FATE_ICON: Record<Fate, string> = { kept: '✓', clipped: '✂', dropped: '✕' };

export function fateBadge(fate: Fate, planFate?: Fate): HTMLSpanElement {
  return h(
    'span',
    { class: `fate fate-${fate}` },
    h('span', { class: 'fate-icon', 'aria-hidden': 'true' }, FATE_ICON[fate]),
    ` ${fate}`,
    planFate && planFate !== fate ? h('span', { class: 'plan-fate' }, ` (plan: ${planFate})`) : null,
  );
}
