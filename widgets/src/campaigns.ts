/**
 * The "Campaigns" side panel: campaign stores listed by the server route
 * GET /wavebench/stores.
 */

import { URLExt } from '@jupyterlab/coreutils';
import { ServerConnection } from '@jupyterlab/services';
import { Message } from '@lumino/messaging';
import { Widget } from '@lumino/widgets';

/** One campaign store, as the panel shows it. */
export interface IStoreInfo {
  /** Store folder, relative to the server's root directory (POSIX). */
  path: string;
  /** Scenario name, or the folder name when the spec cannot be read. */
  scenario: string;
  /** Trials done and planned; null when unknown. */
  done: number | null;
  planned: number | null;
  state: 'finished' | 'running' | 'interrupted' | 'unknown';
  verdicts: { [requirement: string]: 'pass' | 'fail' | 'undecided' };
  /** Whether <path>/report.html exists. */
  report: boolean;
  error?: string | null;
}

const STATES = ['finished', 'running', 'interrupted'];

function asCount(value: unknown): number | null {
  return typeof value === 'number' && Number.isFinite(value) ? value : null;
}

/**
 * One store from the server's JSON. Reads the server extension's field names
 * (`trials_done`, `trials_planned`, `has_report`, `name`) and the short ones
 * (`done`, `planned`, `report`).
 */
export function normaliseStore(raw: any): IStoreInfo {
  const path = String(raw?.path ?? '');
  const folder = path.split('/').filter(Boolean).pop() ?? path;
  const state = STATES.includes(raw?.state) ? raw.state : 'unknown';
  const verdicts: IStoreInfo['verdicts'] = {};
  if (raw?.verdicts && typeof raw.verdicts === 'object') {
    for (const [name, v] of Object.entries(raw.verdicts)) {
      if (v === 'pass' || v === 'fail' || v === 'undecided') {
        verdicts[name] = v;
      }
    }
  }
  return {
    path,
    scenario: String(raw?.scenario ?? raw?.name ?? folder),
    done: asCount(raw?.trials_done ?? raw?.done),
    planned: asCount(raw?.trials_planned ?? raw?.planned),
    state,
    verdicts,
    report: Boolean(raw?.has_report ?? raw?.report),
    error: typeof raw?.error === 'string' && raw.error ? raw.error : null
  };
}

/** Re-read period while the panel is shown: with a campaign running, and without. */
const POLL_MS = 5000;
const IDLE_POLL_MS = 30000;

/** Fetch the list of campaign stores. */
export async function fetchStores(
  settings: ServerConnection.ISettings
): Promise<IStoreInfo[]> {
  const url = URLExt.join(settings.baseUrl, 'wavebench', 'stores');
  const response = await ServerConnection.makeRequest(url, {}, settings);
  if (!response.ok) {
    throw new Error(
      response.status === 404
        ? 'The wavebench server extension is not answering (GET /wavebench/stores: 404).'
        : `GET /wavebench/stores answered ${response.status} ${response.statusText}.`
    );
  }
  const data = await response.json();
  const list = Array.isArray(data) ? data : data?.stores;
  if (!Array.isArray(list)) {
    throw new Error('GET /wavebench/stores did not return a list of stores.');
  }
  return list.map(normaliseStore);
}

/** URL of a store's report through the server's files handler. */
export function reportUrl(settings: ServerConnection.ISettings, path: string): string {
  return URLExt.join(settings.baseUrl, 'files', URLExt.encodeParts(path), 'report.html');
}

export class CampaignsPanel extends Widget {
  /**
   * @param settings - the server connection (base URL, token)
   * @param onOpenNotebook - opens a new notebook that loads the store at this path
   *   below the server root
   */
  constructor(
    settings: ServerConnection.ISettings,
    onOpenNotebook: (path: string) => Promise<unknown>
  ) {
    super();
    this._settings = settings;
    this._onOpenNotebook = onOpenNotebook;
    this.addClass('wb-Campaigns');

    const header = document.createElement('div');
    header.className = 'wb-Campaigns-header';
    const title = document.createElement('h2');
    title.className = 'wb-Campaigns-title';
    title.textContent = 'Campaigns';
    const button = document.createElement('button');
    button.className = 'wb-Campaigns-refresh jp-Button';
    button.textContent = 'Refresh';
    button.title = 'Read the campaign stores again';
    button.addEventListener('click', () => void this.refresh());
    header.append(title, button);

    this._status = document.createElement('div');
    this._status.className = 'wb-Campaigns-status';
    this._list = document.createElement('ul');
    this._list.className = 'wb-Campaigns-list';
    this.node.append(header, this._status, this._list);
  }

  /** The stores shown now. */
  get stores(): readonly IStoreInfo[] {
    return this._stores;
  }

  /**
   * Read the stores again and redraw. While the panel is shown it reads them
   * again every 5 s when a campaign is running, every 30 s otherwise (a new
   * store appears by then); hidden, it waits until it is shown.
   */
  async refresh(): Promise<void> {
    this._clearTimer();
    this._status.textContent = 'Reading campaign stores…';
    try {
      this._stores = await fetchStores(this._settings);
      this._error = '';
    } catch (err) {
      this._stores = [];
      this._error = err instanceof Error ? err.message : String(err);
    }
    this._render();
    this._clearTimer(); // a refresh started meanwhile may have set one
    if (!this.isDisposed && this.isVisible) {
      const running = this._stores.some(s => s.state === 'running');
      this._timer = window.setTimeout(() => void this.refresh(), running ? POLL_MS : IDLE_POLL_MS);
    }
  }

  dispose(): void {
    this._clearTimer();
    super.dispose();
  }

  protected onAfterAttach(msg: Message): void {
    super.onAfterAttach(msg);
    void this.refresh();
  }

  protected onBeforeHide(msg: Message): void {
    this._clearTimer();
    super.onBeforeHide(msg);
  }

  protected onAfterShow(msg: Message): void {
    super.onAfterShow(msg);
    void this.refresh();
  }

  private _clearTimer(): void {
    if (this._timer !== undefined) {
      window.clearTimeout(this._timer);
      this._timer = undefined;
    }
  }

  private _render(): void {
    this._list.replaceChildren();
    if (this._error) {
      this._status.textContent = this._error;
      this._status.classList.add('wb-mod-error');
      return;
    }
    this._status.classList.remove('wb-mod-error');
    const running = this._stores.filter(s => s.state === 'running').length;
    this._status.textContent =
      this._stores.length === 0
        ? 'No campaign stores under the server root yet.'
        : `${this._stores.length} store${this._stores.length === 1 ? '' : 's'}` +
          (running ? `, ${running} running (refreshing every ${POLL_MS / 1000} s)` : '');
    for (const store of this._stores) {
      this._list.append(this._renderStore(store));
    }
  }

  private _renderStore(store: IStoreInfo): HTMLLIElement {
    const item = document.createElement('li');
    item.className = `wb-Store wb-mod-${store.state}`;
    item.title = store.report
      ? `Open ${store.path}/report.html in a new tab`
      : `${store.path}: no report yet; open a notebook that loads it`;

    const top = document.createElement('div');
    top.className = 'wb-Store-top';
    const name = document.createElement('span');
    name.className = 'wb-Store-scenario';
    name.textContent = store.scenario || '(unnamed scenario)';
    const state = document.createElement('span');
    state.className = `wb-Store-state wb-mod-${store.state}`;
    state.textContent = store.state;
    top.append(name, state);

    const path = document.createElement('div');
    path.className = 'wb-Store-path';
    path.textContent = store.path;

    const progress = document.createElement('div');
    progress.className = 'wb-Store-progress';
    const bar = document.createElement('div');
    bar.className = 'wb-Store-bar';
    const fill = document.createElement('div');
    fill.className = 'wb-Store-fill';
    const share =
      store.done !== null && store.planned ? Math.min(1, store.done / store.planned) : 0;
    fill.style.width = `${(100 * share).toFixed(1)}%`;
    bar.append(fill);
    const count = document.createElement('span');
    count.className = 'wb-Store-count';
    count.textContent = `${store.done ?? '?'} / ${store.planned ?? '?'} trials`;
    progress.append(bar, count);

    const actions = document.createElement('div');
    actions.className = 'wb-Store-actions';
    if (store.report) {
      const link = document.createElement('span');
      link.className = 'wb-Store-report';
      link.textContent = 'report ↗';
      actions.append(link);
    }
    const open = document.createElement('button');
    open.className = 'wb-Store-notebook';
    open.textContent = 'notebook';
    open.title = `A new notebook that loads ${store.path} into the campaign dashboard`;
    open.addEventListener('click', event => {
      event.stopPropagation();
      void this._openNotebook(store.path);
    });
    actions.append(open);

    const verdicts = document.createElement('div');
    verdicts.className = 'wb-Store-verdicts';
    for (const [req, verdict] of Object.entries(store.verdicts ?? {})) {
      const chip = document.createElement('span');
      chip.className = `wb-Verdict wb-mod-${verdict}`;
      chip.textContent = `${req}: ${verdict}`;
      verdicts.append(chip);
    }

    item.append(top, path, progress, verdicts);
    if (store.error) {
      const err = document.createElement('div');
      err.className = 'wb-Store-error';
      err.textContent = store.error;
      item.append(err);
    }
    item.append(actions);
    const note = document.createElement('div');
    note.className = 'wb-Store-note';
    item.append(note);

    item.addEventListener('click', () => {
      if (store.report) {
        window.open(reportUrl(this._settings, store.path), '_blank', 'noopener');
      } else {
        note.textContent = 'no report yet: opening a notebook that loads it';
        void this._openNotebook(store.path, note);
      }
    });
    return item;
  }

  /** Open a notebook loading the store; a second request for the same store while one is being made is ignored. */
  private async _openNotebook(path: string, note?: HTMLElement): Promise<void> {
    if (this._opening.has(path)) {
      return;
    }
    this._opening.add(path);
    try {
      await this._onOpenNotebook(path);
    } catch (err) {
      this._status.textContent = `Could not open a notebook for ${path}: ${err}`;
      this._status.classList.add('wb-mod-error');
    } finally {
      this._opening.delete(path);
      if (note) {
        note.textContent = '';
      }
    }
  }

  private _settings: ServerConnection.ISettings;
  private _onOpenNotebook: (path: string) => Promise<unknown>;
  private _opening = new Set<string>();
  private _status: HTMLDivElement;
  private _list: HTMLUListElement;
  private _stores: IStoreInfo[] = [];
  private _error = '';
  private _timer: number | undefined = undefined;
}
