/** The slice of the webview API the panel uses (injected, so tests can pass a fake). */
import type { PanelState, WebviewMessage } from '../../extension/protocol/messages';

export interface VsCodeApi {
  postMessage(message: WebviewMessage): void;
  getState(): PanelState | undefined;
  setState(state: PanelState): void;
}

declare global {
  function acquireVsCodeApi(): VsCodeApi;
}
