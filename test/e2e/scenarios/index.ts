import type { Ctx } from '../context';
import { smoke } from './smoke';
import { codelens } from './s1-codelens';
import { problems } from './s2-problems';
import { panel } from './s3-panel';
import { repack } from './s4-repack';
import { payloads } from './s5-payloads';
import { reload } from './s6-reload';

export interface Scenario {
  id: string;
  title: string;
  run(ctx: Ctx): Promise<void>;
}

/** In order: later scenarios build on the state earlier ones leave (open editors, panel, selected turn). */
export const scenarios: Scenario[] = [smoke, codelens, problems, panel, repack, payloads, reload];
