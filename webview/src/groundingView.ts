/**
 * "Reply grounding" section of the turn view: every reply sentence with its label (icon + word,
 * never colour alone) and the passage it rests on; sentences whose only support is text the budget
 * cut point at that passage and say which words lie after the cut. Passage ids are buttons that
 * select the passage (its cut view shows below). Text goes in as text nodes only.
 */
import type { GroundingLabel, GroundingSentence, GroundingView } from '../../extension/protocol/grounding';
import { h } from './dom';
import { int, ratioPct } from './format';

export const LABEL_ICON: Record<GroundingLabel, string> = { supported: '✓', unsupported: '⚠', lost: '✂', skipped: '–' };
export const LABEL_TEXT: Record<GroundingLabel, string> = {
  supported: 'supported',
  unsupported: 'unsupported',
  lost: 'lost to the budget',
  skipped: 'skipped',
};

const FLAG_TEXT: Record<string, string> = {
  'unsupported-sentences': 'a reply sentence no sent passage supports',
  'evidence-lost': 'a reply sentence supported only by clipped or dropped text',
  'evidence-cut': 'a reviewer-marked evidence passage was clipped or dropped',
  'lexical-mismatch': 'a low-ranked passage is by far the best BM25+ match for the query',
  'near-duplicates': 'near-duplicate passages',
  'middle-position': 'the carrying passage sits in the middle of a long passage block',
  'stale-passages': 'stale passages',
};

export interface GroundingViewOptions {
  grounding: GroundingView;
  /** Select a segment (shows its text and cut). */
  onSelect: (id: string) => void;
}

function passageButton(id: string, onSelect: (id: string) => void, label?: string): HTMLButtonElement {
  const b = h('button', { type: 'button', class: 'link-button seg-id', 'data-segment': id, title: `Show ${id} and its cut point` }, label ?? id);
  b.addEventListener('click', () => onSelect(id));
  return b;
}

function supportLine(s: GroundingSentence, onSelect: (id: string) => void): HTMLElement | null {
  const m = s.support;
  if (s.label === 'skipped') return h('div', { class: 'g-support muted' }, `only ${int(s.contentWords)} content word${s.contentWords === 1 ? '' : 's'}, below the minimum: not scored`);
  if (!m) return h('div', { class: 'g-support muted' }, 'no passage shares a content word with it');
  const words = m.overlap.length ? ` · shared words: ${m.overlap.join(', ')}` : '';
  const share = `${int(m.overlap.length)} of ${int(s.contentWords)} content words (${ratioPct(m.share)})`;
  if (s.label === 'supported')
    return h('div', { class: 'g-support' }, 'rests on ', passageButton(m.id, onSelect), ` (${m.kind}, sent part) · ${share}${words}`);
  if (s.label === 'unsupported')
    return h('div', { class: 'g-support muted' }, 'closest: ', passageButton(m.id, onSelect), ` (${m.part === 'kept' ? 'sent part' : 'spilled text'}) · ${share}${words} — below the support threshold`);
  // lost
  const lost = s.lost;
  const where = lost?.fate === 'dropped' ? 'dropped: nothing of it was sent' : lost?.cutChar !== null && lost?.cutChar !== undefined ? `clipped at character ${int(lost.cutChar)}` : 'clipped';
  const after =
    lost && lost.fate !== 'dropped'
      ? lost.afterCut.length
        ? ` · after the cut: ${lost.afterCut.join(', ')}${lost.beforeCut.length ? ` (before it: ${lost.beforeCut.join(', ')})` : ''}`
        : ' · every shared word also occurs before the cut, but not enough of the sentence'
      : words;
  return h('div', { class: 'g-support g-lost' }, 'only in ', passageButton(m.id, onSelect), ` (${where}) · ${share}${after}`);
}

function facts(g: GroundingView, onSelect: (id: string) => void): HTMLElement {
  const items: Array<HTMLElement> = [];
  const c = g.counts;
  items.push(h('li', {}, `${int(c.supported)} supported · ${int(c.unsupported)} unsupported · ${int(c.lost)} lost to the budget · ${int(c.skipped)} skipped`));
  if (g.knowledgeF1 !== null)
    items.push(h('li', {}, `Knowledge F1 ${g.knowledgeF1.toFixed(3)} (against ${g.knowledgeF1Basis === 'evidence' ? 'the reviewer-marked evidence' : 'the best passage'})`));
  if (g.lexical) {
    const lx = g.lexical;
    items.push(
      h(
        'li',
        {},
        `Retriever rank vs BM25+: Kendall tau ${lx.tau === null ? '–' : lx.tau.toFixed(2)}`,
        lx.best ? ' · best lexical match ' : null,
        lx.best ? passageButton(lx.best, onSelect) : null,
        lx.best ? ` (rank ${lx.bestRank ?? '–'}${lx.ratio !== null ? `, ${lx.ratio.toFixed(1)}× the runner-up` : ''})` : null,
      ),
    );
  }
  if (g.position.best)
    items.push(
      h('li', {}, 'Carrying passage ', passageButton(g.position.best, onSelect), ` sent at position ${g.position.position ?? '–'} of ${g.position.of}${g.position.third ? ` (${g.position.third} third)` : ''}`),
    );
  for (const p of g.duplicates.pairs)
    items.push(h('li', {}, 'Near-duplicates ', passageButton(p.b, onSelect), ' of ', passageButton(p.a, onSelect), ` · resemblance ${ratioPct(p.resemblance)} · ${int(p.wastedTokens)} tokens wasted`));
  if (g.stale.length) items.push(h('li', {}, 'Stale: ', ...g.stale.flatMap((id, i) => [i ? ', ' : null, passageButton(id, onSelect)])));
  return h('ul', { class: 'g-facts' }, ...items);
}

export function renderGrounding(o: GroundingViewOptions): HTMLElement {
  const g = o.grounding;
  const flags = g.flags.length
    ? h('ul', { class: 'g-flags', 'aria-label': 'Grounding flags' }, ...g.flags.map((f) => h('li', { class: `g-flag g-flag-${f}` }, h('span', { 'aria-hidden': 'true' }, '⚑ '), `${f}: ${FLAG_TEXT[f] ?? f}`)))
    : h('p', { class: 'muted' }, 'No grounding flags.');
  const list = g.sentences.length
    ? h(
        'ol',
        { class: 'g-sentences' },
        ...g.sentences.map((s) =>
          h(
            'li',
            { class: `g-sentence g-${s.label}`, 'data-label': s.label, 'aria-label': `Sentence ${s.index + 1}: ${LABEL_TEXT[s.label]}` },
            h('span', { class: 'g-label' }, h('span', { class: 'g-icon', 'aria-hidden': 'true' }, LABEL_ICON[s.label]), ` ${LABEL_TEXT[s.label]}`),
            ' ',
            h('q', { class: 'g-text' }, s.text),
            supportLine(s, o.onSelect),
          ),
        ),
      )
    : h('p', { class: 'muted' }, 'This turn has no reply to check.');
  return h(
    'section',
    { class: 'card grounding', role: 'region', 'aria-label': 'Reply grounding' },
    h('h2', {}, 'Reply grounding'),
    h('p', { class: 'muted' }, 'Lexical check of each reply sentence against the text that was sent: “unsupported” means “check this”, not proof; a faithful paraphrase can be unsupported.'),
    list,
    facts(g, o.onSelect),
    flags,
  );
}
