/**
 * Loads the heavy engine bundle (dist/engine.js) on first need and keeps one shared token accountant.
 * Nothing here runs at activation.
 */
import * as path from 'node:path';
import type * as EngineModule from './engine';
import type { Accountant } from '../core/tokens/accountant';
import { output } from './output';

export type Engine = typeof EngineModule;

let engine: Engine | undefined;
let accountant: Promise<Accountant> | undefined;

export function loadEngine(): Engine {
  if (!engine) {
    const t0 = performance.now();
    // A runtime path, so the bundler leaves the engine out of dist/extension.js.
    const file = path.join(__dirname, 'engine.js');
    // eslint-disable-next-line @typescript-eslint/no-require-imports -- deliberate lazy load of a sibling bundle
    engine = require(file) as Engine;
    output().info(`Spillway engine loaded in ${(performance.now() - t0).toFixed(1)} ms`);
  }
  return engine;
}

export function sharedAccountant(): Promise<Accountant> {
  if (!accountant) {
    const t0 = performance.now();
    accountant = loadEngine()
      .Accountant.create()
      .then((a) => {
        output().info(`Token accountant ready in ${(performance.now() - t0).toFixed(1)} ms`);
        return a;
      });
  }
  return accountant;
}
