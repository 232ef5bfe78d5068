/**
 * wavebench in JupyterLab.
 *
 * - a launcher section "wavebench" whose cards create new trial notebooks
 *   from the templates bundled in ./templates.ts;
 * - a left side panel "Campaigns" listing campaign stores from the server
 *   route GET /wavebench/stores;
 * - palette commands (category "wavebench") for each template and for
 *   refreshing the campaign list;
 * - in notebooks, a wavebench panel's static twin where its live widget
 *   cannot be drawn (./twinfallback.ts).
 */

import {
  ILabShell,
  JupyterFrontEnd,
  JupyterFrontEndPlugin
} from '@jupyterlab/application';
import { ICommandPalette } from '@jupyterlab/apputils';
import { IDocumentManager } from '@jupyterlab/docmanager';
import { IDefaultFileBrowser } from '@jupyterlab/filebrowser';
import { ILauncher } from '@jupyterlab/launcher';
import {
  INotebookTracker,
  INotebookWidgetFactory,
  NotebookPanel,
  NotebookWidgetFactory
} from '@jupyterlab/notebook';

import { CampaignsPanel } from './campaigns';
import { campaignsIcon, wavebenchIcon } from './icons';
import { SPEC_FACTORY, SpecSummaryFactory } from './specviewer';
import { ITemplate, specTemplate, TEMPLATES, templateNotebook } from './templates';
import { installTwinFallback } from './twinfallback';

const CATEGORY = 'wavebench';

export namespace CommandIDs {
  export const newTrial = (key: string): string => `wavebench:new-trial-${key}`;
  export const refreshCampaigns = 'wavebench:refresh-campaigns';
  export const showCampaigns = 'wavebench:show-campaigns';
  export const trialFromSpec = 'wavebench:new-trial-from-spec';
}

/** Create an untitled notebook in `dir`, fill it from a template and open it. */
async function newTrialNotebook(
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
          return newTrialNotebook(app, docManager, cwd, t);
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
  optional: [ILabShell, ICommandPalette],
  activate: (
    app: JupyterFrontEnd,
    labShell: ILabShell | null,
    palette: ICommandPalette | null
  ): void => {
    const panel = new CampaignsPanel(app.serviceManager.serverSettings);
    panel.id = 'wavebench-campaigns';
    panel.title.icon = campaignsIcon;
    panel.title.caption = 'wavebench campaigns';
    app.shell.add(panel, 'left', { rank: 850 });

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
    void labShell;
  }
};

/** A summary view for wavebench spec files (*.toml), opened through "Open With". */
const specViewerPlugin: JupyterFrontEndPlugin<void> = {
  id: '@wavebench/labextension:spec-viewer',
  description: 'A summary view of wavebench spec files with a button to open one in a trial notebook.',
  autoStart: true,
  requires: [IDocumentManager],
  optional: [ICommandPalette],
  activate: (
    app: JupyterFrontEnd,
    docManager: IDocumentManager,
    palette: ICommandPalette | null
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
    app.commands.addCommand(CommandIDs.trialFromSpec, {
      label: 'New trial notebook from this spec',
      caption: 'A trial notebook beside the spec file that loads it',
      execute: args => {
        const path = String(args['path'] ?? '');
        const parts = path.split('/');
        const fileName = parts.pop() ?? path;
        return newTrialNotebook(app, docManager, parts.join('/'), specTemplate(fileName));
      }
    });
    const factory = new SpecSummaryFactory(
      {
        name: SPEC_FACTORY,
        label: 'wavebench spec',
        fileTypes,
        defaultFor: [],
        readOnly: true
      },
      path => app.commands.execute(CommandIDs.trialFromSpec, { path })
    );
    registry.addWidgetFactory(factory);
    void palette;
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
