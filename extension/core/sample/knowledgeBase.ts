/**
 * A fixed pool of invented knowledge-base articles for the generator, built from sentence templates and
 * word lists so the text is varied but the same for the same pool seed. Each article comes from its own
 * sub-stream (seed mixed with its index), so article n is identical whatever the pool size.
 */
import { mixSeed, mulberry32, type Rng } from './prng';
import {
  AGENCY, CHANNELS, FACILITIES, HELP_HOST, ITEMS, LINES, MONTHS, PRODUCTS, REASONS, REWORDINGS, SENTENCES,
  STATIONS, TOPICS, WEEKDAYS, ZONES, type Topic,
} from './vocabulary';

export interface Article {
  id: string;
  topic: Topic;
  title: string;
  text: string;
  source: string;
  /** ISO date the article was last edited. */
  date: string;
}

const TITLE_FORMS = [
  '{Topic}: {product}', '{Topic} on {line}', '{Topic} at {station}', '{Topic} — frequently asked questions',
  '{Topic} for {product} holders', '{Topic} update for {line}',
] as const;

/** Fills `{slot}` placeholders; unknown slots are left as written (they show up in tests, not silently). */
export function fillTemplate(template: string, rng: Rng, topic = 'fares'): string {
  const filled = template.replace(/\{(\w+)\}/g, (whole, slot: string) => {
    switch (slot) {
      case 'station': case 'station2': return rng.pick(STATIONS);
      case 'line': case 'line2': return rng.pick(LINES);
      case 'product': return rng.pick(PRODUCTS);
      case 'zone': return rng.pick(ZONES);
      case 'channel': return rng.pick(CHANNELS);
      case 'facility': return rng.pick(FACILITIES);
      case 'reason': return rng.pick(REASONS);
      case 'item': return rng.pick(ITEMS);
      case 'weekday': case 'weekday2': return rng.pick(WEEKDAYS);
      case 'month': return rng.pick(MONTHS);
      case 'price': return `${rng.int(1, 89)}.${String(rng.int(0, 19) * 5).padStart(2, '0')}`;
      case 'time': return `${String(rng.int(5, 23)).padStart(2, '0')}:${String(rng.int(0, 11) * 5).padStart(2, '0')}`;
      case 'count': return String(rng.int(2, 90));
      case 'small': return String(rng.int(2, 7));
      case 'day': return String(rng.int(1, 28));
      case 'age': return String(rng.pick([16, 18, 60, 65, 66]));
      case 'share': return rng.pick(['25%', '50%', 'the full cost']);
      case 'Topic': return topic.charAt(0).toUpperCase() + topic.slice(1);
      default: return whole;
    }
  });
  // "a Off-Peak Return" → "an Off-Peak Return".
  return filled.replace(/\b([Aa]) (?=[AEIOU])/g, '$1n ');
}

export function makeArticle(poolSeed: number, index: number): Article {
  const rng = mulberry32(mixSeed(poolSeed, index));
  const topic = TOPICS[index % TOPICS.length] as Topic;
  const title = fillTemplate(rng.pick(TITLE_FORMS), rng, topic);
  // Mostly 3–9 sentences, one article in ten long (12–24), so some passages are worth clipping.
  const n = rng.chance(0.1) ? rng.int(12, 24) : rng.int(3, 9);
  const own = SENTENCES[topic];
  const sentences: string[] = [];
  const used = new Set<string>();
  for (let i = 0; i < n; i++) {
    // One sentence in five borrows from a neighbouring topic, as real help articles wander.
    const pool = rng.chance(0.2) ? SENTENCES[rng.pick(TOPICS)] : own;
    const template = rng.pick(pool);
    // Prefer a template not used yet in this article (one retry keeps it cheap and deterministic).
    const chosen = used.has(template) ? rng.pick(pool) : template;
    used.add(chosen);
    sentences.push(fillTemplate(chosen, rng, topic));
  }
  if (rng.chance(0.3)) sentences.push(`Ask ${AGENCY} staff if you are unsure.`);
  const year = rng.int(2019, 2026);
  const date = `${year}-${String(rng.int(1, 12)).padStart(2, '0')}-${String(rng.int(1, 28)).padStart(2, '0')}`;
  const id = `kb-${String(index).padStart(5, '0')}`;
  return {
    id,
    topic,
    title,
    text: `${title}\n\n${sentences.join(' ')}`,
    source: `https://${HELP_HOST}/articles/${index}`,
    date,
  };
}

/** A reworded copy of an article, as a mirror or an older export would hold it (a near-duplicate). */
export function mirrorOf(article: Article): Article {
  let text = article.text;
  for (const [pattern, replacement] of REWORDINGS) text = text.replace(pattern, replacement);
  return {
    ...article,
    id: `${article.id}-mirror`,
    text,
    source: `https://archive.harbourline.example/kb/${article.id}.html`,
  };
}

export interface KnowledgeBase {
  articles: readonly Article[];
  byTopic: ReadonlyMap<Topic, readonly Article[]>;
}

export function buildKnowledgeBase(poolSeed: number, size: number): KnowledgeBase {
  const articles: Article[] = [];
  const byTopic = new Map<Topic, Article[]>();
  for (const t of TOPICS) byTopic.set(t, []);
  for (let i = 0; i < size; i++) {
    const a = makeArticle(poolSeed, i);
    articles.push(a);
    byTopic.get(a.topic)?.push(a);
  }
  return { articles, byTopic };
}
