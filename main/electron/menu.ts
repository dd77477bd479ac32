/**
 * The application menu. Commands that act on what the window shows (which run to save,
 * which view to open) go to the renderer as a `command` push; Quit and About are handled here.
 */
import type { MenuItemConstructorOptions } from 'electron';
import type { AppCommand } from '@shared/ipc/pushes';

/** Shown in Help > About and before a person sets limits. */
export const SAFETY_CAUTION =
  'Lithium and lead-acid charging can start fires and injure. Never leave a charge unattended, ' +
  "keep packs on a non-flammable surface, and follow the cell maker's datasheet and your local codes; " +
  'the limits Taperline watches do not replace the charger’s own protection.';

export interface MenuActions {
  command(command: AppCommand): void;
  about(): void;
  quit(): void;
}

export function menuTemplate(
  actions: MenuActions,
  platform: NodeJS.Platform = process.platform,
): MenuItemConstructorOptions[] {
  const view = (
    label: string,
    view: 'bench' | 'rack' | 'runs' | 'feed',
    accelerator: string,
  ): MenuItemConstructorOptions => ({
    label,
    accelerator,
    click: () => actions.command({ command: 'show-view', view }),
  });
  return [
    {
      label: 'File',
      submenu: [
        {
          label: 'Save report…',
          accelerator: 'CmdOrCtrl+S',
          click: () => actions.command({ command: 'save-report' }),
        },
        {
          label: 'Export CSV…',
          accelerator: 'CmdOrCtrl+E',
          click: () => actions.command({ command: 'export-csv' }),
        },
        { type: 'separator' },
        {
          label: 'Quit',
          accelerator: platform === 'darwin' ? 'Cmd+Q' : 'Ctrl+Q',
          click: () => actions.quit(),
        },
      ],
    },
    {
      label: 'View',
      submenu: [
        view('Bench', 'bench', 'CmdOrCtrl+1'),
        view('Rack', 'rack', 'CmdOrCtrl+2'),
        view('Runs', 'runs', 'CmdOrCtrl+3'),
        view('Line feed', 'feed', 'CmdOrCtrl+4'),
        { type: 'separator' },
        { role: 'resetZoom' },
        { role: 'zoomIn' },
        { role: 'zoomOut' },
        { role: 'togglefullscreen' },
      ],
    },
    { label: 'Help', submenu: [{ label: 'About Taperline', click: () => actions.about() }] },
  ];
}
