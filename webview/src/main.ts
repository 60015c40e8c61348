/**
 * Webview entry: registers the widgets, wires the host messages to the panel controller and says
 * `ready`. Everything shown is built with DOM APIs from view models the host sends.
 */
import { scriptStart } from './startTime';
import './widgets';
import { PanelApp } from './app';
import type { HostMessage } from '../../extension/protocol/messages';

const api = acquireVsCodeApi();
const root = document.getElementById('app') ?? document.body.appendChild(document.createElement('main'));
const app = new PanelApp(root, api, { scriptStart });
window.addEventListener('message', (e: MessageEvent<HostMessage>) => app.handle(e.data));
app.start();
