/**
 * wavebench in JupyterLab.
 *
 * - a launcher section "wavebench" whose cards create new trial notebooks
 *   from the templates bundled in ./templates.ts;
 * - a left side panel "Campaigns" listing campaign stores from the server
 *   route GET /wavebench/stores;
 * - palette commands (category "wavebench") for each template, for the
 *   campaign list, for a notebook loading the selected store, and for the
 *   spec summary view and a trial notebook from the spec;
 * - in notebooks, a wavebench panel's static twin where its live widget
 *   cannot be drawn (./twinfallback.ts).
 */

import {
  JupyterFrontEnd,
  JupyterFrontEndPlugin
} from '@jupyterlab/application';
import { ICommandPalette, showErrorMessage } from '@jupyterlab/apputils';
import { IDocumentManager } from '@jupyterlab/docmanager';
import { IDefaultFileBrowser } from '@jupyterlab/filebrowser';
import { ILauncher } from '@jupyterlab/launcher';
import { Contents } from '@jupyterlab/services';
import {
  INotebookTracker,
  INotebookWidgetFactory,
  NotebookPanel,
  NotebookWidgetFactory
} from '@jupyterlab/notebook';

import { CampaignsPanel } from './campaigns';
import { campaignsIcon, wavebenchIcon } from './icons';
import {
  SPEC_FACTORY,
  SPEC_FILE_TYPE,
  SPEC_NAME_PATTERN,
  SpecSummaryFactory
} from './specviewer';
import {
  ITemplate,
  specTemplate,
  storeTemplate,
  TEMPLATES,
  templateNotebook
} from './templates';
import { installTwinFallback } from './twinfallback';

const CATEGORY = 'wavebench';

export namespace CommandIDs {
  export const newTrial = (key: string): string => `wavebench:new-trial-${key}`;
  export const refreshCampaigns = 'wavebench:refresh-campaigns';
  export const showCampaigns = 'wavebench:show-campaigns';
  export const trialFromSpec = 'wavebench:new-trial-from-spec';
  export const notebookFromStore = 'wavebench:new-notebook-from-store';
  export const openSpecSummary = 'wavebench:open-spec-summary';
}

/** The one item selected in the file browser, if exactly one is. */
function selectedItem(browser: IDefaultFileBrowser | null): Contents.IModel | null {
  const items = browser ? Array.from(browser.selectedItems()) : [];
  return items.length === 1 ? items[0] : null;
}

/** Split a path below the server root into its folder and its last part. */
function splitPath(path: string): [string, string] {
  const parts = path.split('/');
  const name = parts.pop() ?? path;
  return [parts.join('/'), name];
}

/** Create an untitled notebook in `dir`, fill it from a template and open it. */
async function newNotebook(
  app: JupyterFrontEnd,
  docManager: IDocumentManager,
  dir: string,
  template: ITemplate
): Promise<unknown> {
  const model = await app.commands.execute('docmanager:new-untitled', {
    path: dir,
    type: 'notebook'
  });
  await app.serviceManager.contents.save(model.path, {
    type: 'notebook',
    format: 'json',
    content: templateNotebook(template)
  });
  return docManager.openOrReveal(model.path, 'Notebook', { name: 'python3' });
}

/** Launcher cards and palette commands that create trial notebooks. */
const templatesPlugin: JupyterFrontEndPlugin<void> = {
  id: '@wavebench/labextension:templates',
  description: 'New wavebench trial notebooks from bundled templates.',
  autoStart: true,
  requires: [IDocumentManager],
  optional: [ILauncher, ICommandPalette, IDefaultFileBrowser],
  activate: (
    app: JupyterFrontEnd,
    docManager: IDocumentManager,
    launcher: ILauncher | null,
    palette: ICommandPalette | null,
    browser: IDefaultFileBrowser | null
  ): void => {
    const { commands } = app;
    TEMPLATES.forEach((t, rank) => {
      const id = CommandIDs.newTrial(t.key);
      commands.addCommand(id, {
        label: args => (args['isPalette'] ? `New trial notebook: ${t.label}` : t.label),
        caption: t.caption,
        icon: args => (args['isPalette'] ? undefined : wavebenchIcon),
        execute: async args => {
          const cwd = (args['cwd'] as string) ?? browser?.model.path ?? '';
          return newNotebook(app, docManager, cwd, t);
        }
      });
      launcher?.add({ command: id, category: 'wavebench', rank });
      palette?.addItem({ command: id, category: CATEGORY, args: { isPalette: true } });
    });
  }
};

/** The "Campaigns" side panel. */
const campaignsPlugin: JupyterFrontEndPlugin<void> = {
  id: '@wavebench/labextension:campaigns',
  description: 'A side panel listing wavebench campaign stores.',
  autoStart: true,
  requires: [IDocumentManager],
  optional: [ICommandPalette, IDefaultFileBrowser],
  activate: (
    app: JupyterFrontEnd,
    docManager: IDocumentManager,
    palette: ICommandPalette | null,
    browser: IDefaultFileBrowser | null
  ): void => {
    const panel = new CampaignsPanel(app.serviceManager.serverSettings, path =>
      app.commands.execute(CommandIDs.notebookFromStore, { path })
    );
    panel.id = 'wavebench-campaigns';
    panel.title.icon = campaignsIcon;
    panel.title.caption = 'wavebench campaigns';
    app.shell.add(panel, 'left', { rank: 850 });

    // the store: the `path` argument, or the folder selected in the file browser
    const storePath = (args: { [key: string]: unknown }): string | null => {
      if (typeof args['path'] === 'string' && args['path']) {
        return args['path'];
      }
      const item = selectedItem(browser);
      return item?.type === 'directory' ? item.path : null;
    };
    const isStore = (path: string): boolean => panel.stores.some(s => s.path === path);
    app.commands.addCommand(CommandIDs.notebookFromStore, {
      label: 'New notebook loading the selected campaign store',
      caption: 'A notebook beside the store that opens it in the campaign dashboard',
      isEnabled: args => storePath(args) !== null,
      execute: async args => {
        const path = storePath(args);
        if (path === null) {
          throw new Error('Select a campaign store folder in the file browser first.');
        }
        if (!isStore(path)) {
          await panel.refresh(); // a store made since the panel last read the list
        }
        if (!isStore(path)) {
          await showErrorMessage(
            'Not a campaign store',
            `${path || 'The server root'} holds no campaign store (no manifest.json, no ` +
              'chunks/plan.json), or it is deeper than the Campaigns panel looks.'
          );
          return;
        }
        const [dir, name] = splitPath(path);
        return newNotebook(app, docManager, dir, storeTemplate(name, path));
      }
    });

    app.commands.addCommand(CommandIDs.refreshCampaigns, {
      label: 'Refresh campaigns',
      caption: 'Read the campaign stores again from the server',
      execute: () => panel.refresh()
    });
    app.commands.addCommand(CommandIDs.showCampaigns, {
      label: 'Show campaigns panel',
      execute: () => {
        app.shell.activateById(panel.id);
      }
    });
    palette?.addItem({ command: CommandIDs.refreshCampaigns, category: CATEGORY });
    palette?.addItem({ command: CommandIDs.showCampaigns, category: CATEGORY });
    palette?.addItem({ command: CommandIDs.notebookFromStore, category: CATEGORY });
  }
};

/**
 * A summary view for wavebench spec files: the default view of files named like a spec
 * (`SPEC_NAME_PATTERN`), and under "Open With" for any other *.toml.
 */
const specViewerPlugin: JupyterFrontEndPlugin<void> = {
  id: '@wavebench/labextension:spec-viewer',
  description: 'A summary view of wavebench spec files with a button to open one in a trial notebook.',
  autoStart: true,
  requires: [IDocumentManager],
  optional: [ICommandPalette, IDefaultFileBrowser],
  activate: (
    app: JupyterFrontEnd,
    docManager: IDocumentManager,
    palette: ICommandPalette | null,
    browser: IDefaultFileBrowser | null
  ): void => {
    const registry = app.docRegistry;
    let fileTypes = registry.getFileTypesForPath('spec.toml').map(ft => ft.name);
    if (fileTypes.length === 0) {
      registry.addFileType({
        name: 'wavebench-toml',
        displayName: 'TOML file',
        extensions: ['.toml'],
        mimeTypes: ['application/toml'],
        contentType: 'file',
        fileFormat: 'text'
      });
      fileTypes = ['wavebench-toml'];
    }
    // files named like a spec (spec.toml, leg_spec.toml, a.spec.toml) open in the summary by
    // default; any other TOML file (pyproject.toml ...) keeps its editor and has it under Open With
    registry.addFileType({
      name: SPEC_FILE_TYPE,
      displayName: 'wavebench spec',
      extensions: [],
      pattern: SPEC_NAME_PATTERN,
      mimeTypes: ['application/toml'],
      contentType: 'file',
      fileFormat: 'text',
      icon: wavebenchIcon
    });
    // any TOML file: the summary says so when it is not a wavebench spec
    const isToml = (path: string | undefined): path is string =>
      typeof path === 'string' && path.toLowerCase().endsWith('.toml');
    // the spec: the `path` argument, the file of the current tab, or the file
    // selected in the file browser
    const specPath = (args: { [key: string]: unknown }, fromTab: boolean): string | null => {
      if (typeof args['path'] === 'string' && args['path']) {
        return args['path'];
      }
      const current = app.shell.currentWidget;
      const tabPath = current ? docManager.contextForWidget(current)?.path : undefined;
      if (fromTab && isToml(tabPath)) {
        return tabPath;
      }
      const item = selectedItem(browser);
      return item?.type === 'file' && isToml(item.path) ? item.path : null;
    };
    app.commands.addCommand(CommandIDs.trialFromSpec, {
      label: 'New trial notebook from this spec',
      caption: 'A trial notebook beside the spec file that loads it',
      isEnabled: args => specPath(args, true) !== null,
      execute: args => {
        const path = specPath(args, true);
        if (path === null) {
          throw new Error('Open or select a spec file (.toml) first.');
        }
        const [dir, fileName] = splitPath(path);
        return newNotebook(app, docManager, dir, specTemplate(fileName));
      }
    });
    app.commands.addCommand(CommandIDs.openSpecSummary, {
      label: 'Open spec summary',
      caption: 'The selected spec file (.toml) as a readable summary of its scenario',
      isEnabled: args => specPath(args, false) !== null,
      execute: args => {
        const path = specPath(args, false);
        if (path === null) {
          throw new Error('Select a spec file (.toml) in the file browser first.');
        }
        return docManager.openOrReveal(path, SPEC_FACTORY);
      }
    });
    palette?.addItem({ command: CommandIDs.trialFromSpec, category: CATEGORY });
    palette?.addItem({ command: CommandIDs.openSpecSummary, category: CATEGORY });
    const factory = new SpecSummaryFactory(
      {
        name: SPEC_FACTORY,
        label: 'wavebench spec',
        fileTypes: [...fileTypes, SPEC_FILE_TYPE],
        defaultFor: [SPEC_FILE_TYPE],
        readOnly: true
      },
      path => app.commands.execute(CommandIDs.trialFromSpec, { path })
    );
    registry.addWidgetFactory(factory);
  }
};

/**
 * The static-twin fallback for wavebench panels, in every notebook.
 *
 * A notebook's registry is handled as soon as the notebook widget is made
 * (the notebook widget factory's `widgetCreated`, before the file's cells
 * are rendered); notebooks the tracker knows (already open, or made by
 * another factory) are handled when they are added to it. Outputs a notebook
 * rendered before that keep the plain ipywidgets renderer.
 */
const twinFallbackPlugin: JupyterFrontEndPlugin<void> = {
  id: '@wavebench/labextension:twin-fallback',
  description: 'Shows the static twin of a wavebench panel where its live widget cannot be drawn.',
  autoStart: true,
  optional: [INotebookWidgetFactory, INotebookTracker],
  activate: (
    app: JupyterFrontEnd,
    factory: NotebookWidgetFactory.IFactory | null,
    tracker: INotebookTracker | null
  ): void => {
    const install = (panel: NotebookPanel): void => installTwinFallback(panel.content.rendermime);
    factory?.widgetCreated.connect((_sender, panel) => install(panel));
    tracker?.forEach(install);
    tracker?.widgetAdded.connect((_sender, panel) => install(panel));
  }
};

export default [templatesPlugin, campaignsPlugin, specViewerPlugin, twinFallbackPlugin];
