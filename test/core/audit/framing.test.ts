import { describe, expect, it } from 'vitest';
import { auditText } from '../../../extension/core/audit/audit';
import { refChatTokens, refCount } from '../../support/reference';

/**
 * The worked example of OpenAI's cookbook notebook "How to count tokens with tiktoken": six chat
 * messages (four with a `name`), for which the notebook prints "129 prompt tokens counted by
 * num_tokens_from_messages()" and the same figure from the API for gpt-3.5-turbo / gpt-4
 * (cl100k_base). The figure 129 and the message texts are recalled from memory of that notebook.
 */
const COOKBOOK = [
  { role: 'system', content: 'You are a helpful, pattern-following assistant that translates corporate jargon into plain English.' },
  { role: 'system', name: 'example_user', content: 'New synergies will help drive top-line growth.' },
  { role: 'system', name: 'example_assistant', content: 'Things working well together will increase revenue.' },
  { role: 'system', name: 'example_user', content: "Let's circle back when we have more bandwidth to touch base on opportunities for increased leverage." },
  { role: 'system', name: 'example_assistant', content: "Let's talk later when we're less busy about how to do better." },
  { role: 'user', content: "This late pivot means we don't have time to boil the ocean for the client deliverable." },
];

function cookbookRecord(framing: unknown): string {
  return JSON.stringify({
    v: 1,
    conversation: 'cookbook',
    turn: 1,
    model: { name: 'gpt-4', encoding: 'cl100k_base', window: 8192, reserve: 0 },
    framing,
    segments: COOKBOOK.map((m, i) => ({
      id: `m${i}`,
      kind: i === 0 ? 'instructions' : i === 5 ? 'query' : 'history',
      role: m.role,
      text: m.content,
      ...(m.name ? { name: m.name } : {}),
      turn: i,
    })),
  });
}

describe('chat framing (3 per message, 1 per name, 3 to prime)', () => {
  it('gives the cookbook total of 129 for its six-message example', async () => {
    const r = await auditText(cookbookRecord('chat'), {});
    const l = r.records[0]!;
    // Arithmetic of the rule, written out:
    //   6 messages × 3                      = 18
    //   role strings: 6 × 1 ("system"/"user" are one token each) = 6
    //   names: 4 × (tokens("example_user" | "example_assistant") + 1)
    //   contents: Σ tokens(content)
    //   priming                             = 3
    const roleTokens = COOKBOOK.reduce((a, m) => a + refCount('cl100k_base', m.role), 0);
    expect(roleTokens).toBe(6);
    const nameTokens = COOKBOOK.reduce((a, m) => a + (m.name ? refCount('cl100k_base', m.name) + 1 : 0), 0);
    const contentTokens = COOKBOOK.reduce((a, m) => a + refCount('cl100k_base', m.content), 0);
    expect(l.framing).toBe(6 * 3 + roleTokens + nameTokens + 3);
    expect(l.used).toBe(18 + roleTokens + nameTokens + contentTokens + 3);
    expect(l.used).toBe(129);
    expect(l.used).toBe(refChatTokens('cl100k_base', COOKBOOK));
    // Every segment is its own message: no join tokens.
    expect(l.joins).toBe(0);
  });

  it('with framing "none" counts only the message contents', async () => {
    const r = await auditText(cookbookRecord('none'), {});
    const contentTokens = COOKBOOK.reduce((a, m) => a + refCount('cl100k_base', m.content), 0);
    expect(r.records[0]!.framing).toBe(0);
    expect(r.records[0]!.used).toBe(contentTokens);
  });

  it('takes custom numbers', async () => {
    const r = await auditText(cookbookRecord({ perMessage: 4, perName: 0, priming: 2, countRole: false }), {});
    const contentTokens = COOKBOOK.reduce((a, m) => a + refCount('cl100k_base', m.content), 0);
    // 6 × 4 per message + 2 priming; with countRole false neither role nor name strings are counted, perName is 0.
    expect(r.records[0]!.used).toBe(6 * 4 + contentTokens + 2);
  });

  it('counts "tiktoken is great!" as 6 cl100k_base tokens (cookbook check value)', async () => {
    const line = JSON.stringify({
      v: 1,
      conversation: 'c',
      turn: 1,
      model: { name: 'gpt-4', window: 100, reserve: 0 },
      framing: 'none',
      segments: [{ id: 'q', kind: 'query', role: 'user', text: 'tiktoken is great!' }],
    });
    const r = await auditText(line, {});
    expect(r.records[0]!.segments[0]!.tokens).toBe(6);
  });
});
