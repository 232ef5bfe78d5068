/**
 * wavebench in JupyterLab.
 *
 * - a launcher section "wavebench" whose cards create new trial notebooks
 *   from the templates bundled in ./templates.ts;
 * - a left side panel "Campaigns" listing campaign stores from the server
 *   route GET /wavebench/stores;
 * - palette commands (category "wavebench") for each template and for
 *   refreshing the campaign list.
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

import { CampaignsPanel } from './campaigns';
import { campaignsIcon, wavebenchIcon } from './icons';
import { TEMPLATES, templateNotebook } from './templates';

const CATEGORY = 'wavebench';

export namespace CommandIDs {
  export const newTrial = (key: string): string => `wavebench:new-trial-${key}`;
  export const refreshCampaigns = 'wavebench:refresh-campaigns';
  export const showCampaigns = 'wavebench:show-campaigns';
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
          const model = await commands.execute('docmanager:new-untitled', {
            path: cwd,
            type: 'notebook'
          });
          await app.serviceManager.contents.save(model.path, {
            type: 'notebook',
            format: 'json',
            content: templateNotebook(t)
          });
          return docManager.openOrReveal(model.path, 'Notebook', { name: 'python3' });
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

export default [templatesPlugin, campaignsPlugin];
