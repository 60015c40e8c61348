import { describe, expect, it } from 'vitest';
import { IMPORT_SETTINGS, importOptionsFromSettings, convertText } from '../../../extension/core/import/index';

describe('spillway.import.* settings → ImportOptions', () => {
  it('maps every setting and names the values it ignores', () => {
    const settings: Record<string, unknown> = {
      splitter: 'tag', tag: 'passage', idAttribute: 'key', layout: 'split', passageRoles: ['user', 'nobody'],
      roleKinds: { developer: 'instructions', user: 'bogus' }, roleAliases: { Bot: 'assistant', x: 'alien' },
      queryMessage: -1, window: 32768, reserve: 1.5, encoding: 'cl100k_base', sent: 'none',
    };
    const { options, problems } = importOptionsFromSettings((k) => settings[k]);
    expect(options).toMatchObject({
      splitter: { kind: 'tag', tag: 'passage', idAttribute: 'key' }, layout: 'split', passageRoles: ['user'],
      roleKinds: { developer: 'instructions' }, roleAliases: { bot: 'assistant' }, queryMessage: -1, window: 32768, encoding: 'cl100k_base', sent: 'none',
    });
    expect(options.reserve).toBeUndefined();
    expect(problems).toHaveLength(4); // passageRoles nobody, roleKinds.user, roleAliases.x, reserve
  });

  it('the settings list covers every ImportOptions key the importers read', () => {
    expect(Object.keys(IMPORT_SETTINGS).sort()).toEqual(
      ['encoding', 'idAttribute', 'layout', 'passageRoles', 'pattern', 'queryMessage', 'reserve', 'roleAliases', 'roleKinds', 'sent', 'separator', 'splitter', 'tag', 'window'].sort(),
    );
  });

  it('a role alias from settings maps an unknown role', () => {
    const line = JSON.stringify({ model: 'gpt-4o', messages: [{ role: 'Bot', content: 'Hello' }, { role: 'user', content: 'Hi' }] });
    const { options } = importOptionsFromSettings((k) => (k === 'roleAliases' ? { Bot: 'assistant' } : undefined));
    const r = convertText(line, 'chat', options);
    expect(r.records[0]!.record.segments.map((s) => `${s.kind}:${s.role}`)).toEqual(['history:assistant', 'query:user']);
    expect(r.issues).toEqual([]);
  });
});
