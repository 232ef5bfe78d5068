/**
 * A read-only summary view of a wavebench spec (a TOML file), with a button
 * that opens the spec in a new trial notebook.
 *
 * Registered as the "wavebench spec" widget factory for *.toml files. It is
 * the default view only of files named like a spec (`SPEC_NAME_PATTERN`:
 * spec.toml as a store holds it, leg_spec.toml, leg.spec.toml); any other
 * TOML file (pyproject.toml is TOML too) opens in it through "Open With".
 */

import {
  ABCWidgetFactory,
  DocumentRegistry,
  DocumentWidget
} from '@jupyterlab/docregistry';
import { Widget } from '@lumino/widgets';
import { parse } from 'smol-toml';

export const SPEC_FACTORY = 'wavebench spec';

/** The file type of files named like a spec, whose default view is the summary. */
export const SPEC_FILE_TYPE = 'wavebench-spec';

/** File names that open in the summary by default: `spec.toml` or ending `_spec.toml`, `-spec.toml`, `.spec.toml`. */
export const SPEC_NAME_PATTERN = '^(.*[._-])?spec\\.toml$';

type Table = { [key: string]: unknown };

function isTable(v: unknown): v is Table {
  return typeof v === 'object' && v !== null && !Array.isArray(v) && !(v instanceof Date);
}

/** A spec value in a few characters: numbers as written, distributions as name(args). */
export function formatValue(v: unknown): string {
  if (Array.isArray(v)) {
    return `[${v.map(formatValue).join(', ')}]`;
  }
  if (isTable(v)) {
    const keys = Object.keys(v);
    if (keys.length === 1 && (isTable(v[keys[0]]) || Array.isArray(v[keys[0]]))) {
      const inner = v[keys[0]];
      const args = isTable(inner)
        ? Object.entries(inner).map(([k, x]) => `${k}=${formatValue(x)}`).join(', ')
        : (inner as unknown[]).map(formatValue).join(', ');
      return `${keys[0]}(${args})`;
    }
    return `{${Object.entries(v).map(([k, x]) => `${k}: ${formatValue(x)}`).join(', ')}}`;
  }
  if (v === undefined || v === null) {
    return '—';
  }
  return String(v);
}

/** Rows (section, field, value) of a spec's summary; the requirements get their own list. */
export function summaryRows(spec: Table): [string, string, string][] {
  const rows: [string, string, string][] = [];
  const wanted: [string, string[]][] = [
    ['scenario', ['name', 'duration_s', 'dt_s']],
    ['craft', ['demo']],
    ['sea', ['kind', 'hs_m', 'tp_s', 'depth_m']],
    ['current', ['speed_mps', 'set_deg']],
    ['wind', ['speed_mps', 'direction_from_deg']],
    ['mission', ['kind', 'speed_mps']],
    ['stack', ['navigator', 'guide.kind', 'pilot.kind']],
    ['campaign', ['trials', 'seed']]
  ];
  for (const [section, fields] of wanted) {
    const table = spec[section];
    if (!isTable(table)) {
      continue;
    }
    for (const f of fields) {
      // "guide.kind": the field `kind` of the sub-table `guide`
      const [head, sub] = f.split('.');
      const owner = sub === undefined ? table : table[head];
      const key = sub ?? head;
      if (isTable(owner) && key in owner) {
        rows.push([section, f, formatValue(owner[key])]);
      }
    }
  }
  return rows;
}

export class SpecSummary extends Widget {
  constructor(
    context: DocumentRegistry.Context,
    openInNotebook: (path: string) => Promise<unknown>
  ) {
    super();
    this.addClass('wb-SpecSummary');
    this._context = context;
    this._open = openInNotebook;
    void context.ready.then(() => {
      this._render();
      context.model.contentChanged.connect(() => this._render(), this);
    });
  }

  private _render(): void {
    const node = this.node;
    node.replaceChildren();
    const head = document.createElement('div');
    head.className = 'wb-SpecSummary-head';
    const title = document.createElement('h2');
    const button = document.createElement('button');
    button.className = 'wb-SpecSummary-open jp-Button';
    button.textContent = 'Open in a new trial notebook';
    button.addEventListener('click', () => void this._open(this._context.path));
    head.append(title, button);
    node.append(head);

    let spec: Table;
    try {
      spec = parse(this._context.model.toString()) as Table;
    } catch (err) {
      title.textContent = this._context.localPath;
      button.disabled = true;
      this._note(`This file is not valid TOML: ${err instanceof Error ? err.message : String(err)}`);
      return;
    }
    const scenario = isTable(spec['scenario']) ? spec['scenario'] : undefined;
    if (!('spec_version' in spec) || !scenario) {
      title.textContent = this._context.localPath;
      button.disabled = true;
      this._note('This TOML file does not look like a wavebench spec (no spec_version or [scenario]).');
      return;
    }
    title.textContent = String(scenario['name'] ?? this._context.localPath);

    const table = document.createElement('table');
    table.className = 'wb-SpecSummary-table';
    for (const [section, field, value] of summaryRows(spec)) {
      const tr = document.createElement('tr');
      for (const [text, cls] of [
        [section, 'wb-SpecSummary-section'],
        [field, 'wb-SpecSummary-field'],
        [value, 'wb-SpecSummary-value']
      ]) {
        const td = document.createElement('td');
        td.className = cls;
        td.textContent = text;
        tr.append(td);
      }
      table.append(tr);
    }
    node.append(table);

    const reqs = spec['requirements'];
    const sub = document.createElement('h3');
    sub.textContent = 'Requirements';
    node.append(sub);
    const list = document.createElement('ul');
    list.className = 'wb-SpecSummary-reqs';
    if (isTable(reqs) && Object.keys(reqs).length) {
      for (const [name, req] of Object.entries(reqs)) {
        const li = document.createElement('li');
        const r = isTable(req) ? req : {};
        const bound =
          'below' in r ? `< ${formatValue(r['below'])}` : 'above' in r ? `> ${formatValue(r['above'])}` : '';
        const prob = 'probability' in r ? ` with probability ≥ ${formatValue(r['probability'])}` : '';
        li.textContent = `${name}: ${formatValue(r['metric'])} ${bound}${prob}`.replace(/\s+/g, ' ');
        list.append(li);
      }
    } else {
      const li = document.createElement('li');
      li.textContent = 'none stated';
      list.append(li);
    }
    node.append(list);
    this._note('A summary of the file as written; the Python loader checks every field when the spec is loaded.');
  }

  private _note(text: string): void {
    const p = document.createElement('p');
    p.className = 'wb-SpecSummary-note';
    p.textContent = text;
    this.node.append(p);
  }

  private _context: DocumentRegistry.Context;
  private _open: (path: string) => Promise<unknown>;
}

export class SpecSummaryFactory extends ABCWidgetFactory<DocumentWidget<SpecSummary>> {
  constructor(
    options: DocumentRegistry.IWidgetFactoryOptions<DocumentWidget<SpecSummary>>,
    openInNotebook: (path: string) => Promise<unknown>
  ) {
    super(options);
    this._openInNotebook = openInNotebook;
  }

  protected createNewWidget(context: DocumentRegistry.Context): DocumentWidget<SpecSummary> {
    const content = new SpecSummary(context, this._openInNotebook);
    const widget = new DocumentWidget({ content, context });
    widget.title.caption = `wavebench spec: ${context.localPath}`;
    return widget;
  }

  private _openInNotebook: (path: string) => Promise<unknown>;
}
