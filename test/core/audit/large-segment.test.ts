import { describe, expect, it } from 'vitest';
import { auditText } from '../../../extension/core/audit/audit';
import { recordDiagnostics } from '../../../extension/core/view/diagnostics';
import { ALL_CHECKS } from '../../../extension/core/view/problems';
import { refCount } from '../../support/reference';

describe('guard rail for huge segments', () => {
  it('notes size and counting time, and the editor shows it on the passage', async () => {
    // 26 ASCII characters × 10,000 = 260,000 UTF-8 bytes = 0.26 MB (ordinary prose, so the reference encoder is quick).
    const huge = 'The ferry leaves at noon. '.repeat(10_000);
    const line = JSON.stringify({
      v: 1,
      conversation: 'c',
      turn: 1,
      model: { name: 'gpt-4', window: 400_000, reserve: 0 },
      segments: [
        { id: 'q', kind: 'query', role: 'user', text: 'Is the harbour ferry running?' },
        { id: 'p7', kind: 'passage', role: 'system', rank: 1, text: huge },
      ],
    });
    const r = await auditText(line, {});
    const l = r.records[0]!;
    const p7 = l.segments[1]!;
    expect(p7.tokens).toBe(refCount('cl100k_base', huge));
    expect(p7.large?.bytes).toBe(260_000);
    expect(l.notes[0]).toMatch(/^passage p7 is 0\.3 MB; counted in \d+\.\d s$/);
    const d = recordDiagnostics({ line: 1, ledger: l, record: JSON.parse(line) } as never, line, ALL_CHECKS).filter((x) => x.code === 'spillway.large-segment');
    expect(d).toHaveLength(1);
    expect(d[0]!.severity).toBe('information');
    // Underlines the passage's text value: it starts after `"text":"` of the second segment.
    expect(line.slice(d[0]!.start, d[0]!.start + 5)).toBe('"The ');
  });
});
