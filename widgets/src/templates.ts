/**
 * Trial notebook templates bundled with the front end.
 *
 * Each template is a short notebook: a caution cell first, a title cell, then
 * code cells that load a built-in wavebench example spec, run a small
 * campaign and show its result card.
 */

export interface ICellSource {
  kind: 'markdown' | 'code';
  source: string;
}

export interface ITemplate {
  /** Short key used in command ids, e.g. "first-trial". */
  key: string;
  /** Label on the launcher card and in the palette. */
  label: string;
  /** One-line description (tooltip). */
  caption: string;
  cells: ICellSource[];
}

const CAUTION_HEAD =
  '> **Caution.** A simulation is no substitute for sea trials, certification or the ' +
  'collision regulations. ';
const CAUTION_TAIL =
  'defer to local rules, the vessel\'s approved documents and licensed practice before ' +
  'acting on them at sea.';

/** The caution cell of the templates, which run built-in specs with invented demo data. */
export const CAUTION =
  CAUTION_HEAD + 'The numbers below come from models with invented demo data; ' + CAUTION_TAIL;

/** The caution cell of notebooks that load the user's own spec or store. */
export const CAUTION_OWN =
  CAUTION_HEAD + 'The numbers below come from models, whatever data went into them; ' + CAUTION_TAIL;

/** `text` as a Markdown code span, whatever backticks it holds (CommonMark 6.1). */
export function markdownCode(text: string): string {
  const longest = Math.max(0, ...(text.match(/`+/g) ?? []).map(run => run.length));
  const fence = '`'.repeat(longest + 1);
  const pad = longest > 0 ? ' ' : '';
  return `${fence}${pad}${text}${pad}${fence}`;
}

export const TEMPLATES: ITemplate[] = [
  {
    key: 'first-trial',
    label: 'First trial',
    caption: 'Load a built-in spec, run a small campaign and read its verdicts',
    cells: [
      { kind: 'markdown', source: CAUTION },
      {
        kind: 'markdown',
        source:
          '# First trial\n\n' +
          'Loads the built-in example spec `skerrow_sound`, runs a small campaign with the ' +
          'spec\'s own seed and shows the result card: each requirement\'s pass share with ' +
          'its confidence interval and the verdict.'
      },
      {
        kind: 'code',
        source:
          'from wavebench.campaign import run_campaign\n' +
          'from wavebench.campaign.fingerprint import result_card\n' +
          'from wavebench.spec import example_spec_path, load_spec\n' +
          '\n' +
          'spec = load_spec(example_spec_path("skerrow_sound"))\n' +
          'print(f"scenario: {spec.scenario.name}, {spec.scenario.duration_s:g} s per trial")'
      },
      {
        kind: 'code',
        source:
          'result = run_campaign(spec, trials=50, progress=False)\n' +
          'result_card(result)'
      }
    ]
  },
  {
    key: 'navigation-study',
    label: 'Navigation study',
    caption: 'Compare two sensor suites for the navigator on the same draws',
    cells: [
      { kind: 'markdown', source: CAUTION },
      {
        kind: 'markdown',
        source:
          '# Navigation study\n\n' +
          'Runs the built-in spec `brannock_bridge` twice: with the spec\'s own sensors and ' +
          'with a DVL added. Both campaigns share the seed, so each trial meets the same sea ' +
          'and the same sensor faults in both.'
      },
      {
        kind: 'code',
        source:
          'from IPython.display import HTML, display\n' +
          '\n' +
          'from wavebench.campaign import run_campaign\n' +
          'from wavebench.campaign.fingerprint import result_card\n' +
          'from wavebench.spec import example_spec_path, load_spec\n' +
          '\n' +
          'path = example_spec_path("brannock_bridge")\n' +
          'SUITES = {\n' +
          '    "as specified": [],\n' +
          '    "with DVL": ["sensors.dvl.kind=dvl", "sensors.dvl.rate_hz=5.0"],\n' +
          '}\n' +
          'specs = {name: load_spec(path, settings) for name, settings in SUITES.items()}'
      },
      {
        kind: 'code',
        source:
          'for name, s in specs.items():\n' +
          '    display(HTML(f"<h4>{name}</h4>"))\n' +
          '    display(result_card(run_campaign(s, trials=30, progress=False)))'
      }
    ]
  },
  {
    key: 'pilot-comparison',
    label: 'Pilot comparison',
    caption: 'Compare two heading-pilot tunings on the same draws',
    cells: [
      { kind: 'markdown', source: CAUTION },
      {
        kind: 'markdown',
        source:
          '# Pilot comparison\n\n' +
          'Runs the built-in spec `skerrow_sound` with two heading-loop natural frequencies. ' +
          'The seed is shared, so the difference between the cards comes from the pilot alone.'
      },
      {
        kind: 'code',
        source:
          'from IPython.display import HTML, display\n' +
          '\n' +
          'from wavebench.campaign import run_campaign\n' +
          'from wavebench.campaign.fingerprint import result_card\n' +
          'from wavebench.spec import example_spec_path, load_spec\n' +
          '\n' +
          'path = example_spec_path("skerrow_sound")\n' +
          'TUNINGS = {"gentle (0.6 rad/s)": 0.6, "brisk (1.0 rad/s)": 1.0}\n' +
          'specs = {\n' +
          '    name: load_spec(path, [f"stack.pilot.heading_natural_frequency_rad_s={w}"])\n' +
          '    for name, w in TUNINGS.items()\n' +
          '}'
      },
      {
        kind: 'code',
        source:
          'for name, s in specs.items():\n' +
          '    display(HTML(f"<h4>{name}</h4>"))\n' +
          '    display(result_card(run_campaign(s, trials=40, progress=False)))'
      }
    ]
  },
  {
    key: 'operability-study',
    label: 'Operability study',
    caption: 'Sweep wave direction and height on a grid and read the verdicts',
    cells: [
      { kind: 'markdown', source: CAUTION },
      {
        kind: 'markdown',
        source:
          '# Operability study\n\n' +
          'Runs the built-in spec `skerrow_sound` over a grid of wave directions and ' +
          'significant wave heights, a few trials per grid point. `notebooks/04_operability_study.ipynb` ' +
          'shows the full study with the polar operability chart.'
      },
      {
        kind: 'code',
        source:
          'from wavebench.campaign import run_campaign\n' +
          'from wavebench.campaign.fingerprint import result_card\n' +
          'from wavebench.spec import example_spec_path, load_spec\n' +
          '\n' +
          'DIRECTIONS = [float(d) for d in range(10, 360, 60)]  # waves coming from, clockwise from north [deg]\n' +
          'HS = [0.5, 1.5]  # significant wave height [m]\n' +
          'REPEATS = 3\n' +
          'spec = load_spec(\n' +
          '    example_spec_path("skerrow_sound"),\n' +
          '    [\n' +
          '        f"sea.spreading.mean_dir_deg={{ grid = {DIRECTIONS} }}",\n' +
          '        f"sea.hs_m={{ grid = {HS} }}",\n' +
          '        f"campaign.trials={len(DIRECTIONS) * len(HS) * REPEATS}",\n' +
          '    ],\n' +
          ')'
      },
      {
        kind: 'code',
        source:
          'result = run_campaign(spec, progress=False)\n' +
          'result_card(result)'
      }
    ]
  }
];

/** nbformat 4 notebook JSON for a template. */
export function templateNotebook(t: ITemplate): any {
  const lines = (s: string): string[] => {
    const parts = s.split('\n');
    return parts.map((p, i) => (i < parts.length - 1 ? p + '\n' : p));
  };
  return {
    nbformat: 4,
    nbformat_minor: 5,
    metadata: {
      kernelspec: { name: 'python3', display_name: 'Python 3 (ipykernel)', language: 'python' },
      language_info: { name: 'python' },
      wavebench: { template: t.key }
    },
    cells: t.cells.map((c, i) =>
      c.kind === 'markdown'
        ? { cell_type: 'markdown', id: `wb-${t.key}-${i}`, metadata: {}, source: lines(c.source) }
        : {
            cell_type: 'code',
            id: `wb-${t.key}-${i}`,
            metadata: {},
            execution_count: null,
            outputs: [],
            source: lines(c.source)
          }
    )
  };
}

/** A trial template that loads a spec file lying beside the new notebook. */
export function specTemplate(fileName: string): ITemplate {
  const quoted = JSON.stringify(fileName);
  return {
    key: 'from-spec',
    label: `Trial from ${fileName}`,
    caption: `A trial notebook that loads ${fileName}`,
    cells: [
      { kind: 'markdown', source: CAUTION_OWN },
      {
        kind: 'markdown',
        source:
          `# Trial from ${markdownCode(fileName)}\n\n` +
          'Loads the spec file beside this notebook, runs a small campaign with its seed and ' +
          'shows the result card. Leave out `trials=` to run as many trials as the spec asks.'
      },
      {
        kind: 'code',
        source:
          'from wavebench.campaign import run_campaign\n' +
          'from wavebench.campaign.fingerprint import result_card\n' +
          'from wavebench.spec import load_spec\n' +
          '\n' +
          `spec = load_spec(${quoted})\n` +
          'print(f"scenario: {spec.scenario.name}, {spec.scenario.duration_s:g} s per trial")'
      },
      {
        kind: 'code',
        source:
          'result = run_campaign(spec, trials=50, progress=False)\n' +
          'result_card(result)'
      }
    ]
  };
}

/**
 * A notebook that loads a campaign store: its dashboard (verdicts, distributions,
 * bands, scatter whose points replay a trial, drivers, operability).
 *
 * @param storeName - the store folder's path relative to the new notebook's folder
 * @param storePath - the store's path below the server root (for the heading)
 */
export function storeTemplate(storeName: string, storePath: string): ITemplate {
  const quoted = JSON.stringify(storeName);
  return {
    key: 'from-store',
    label: `Campaign ${storePath}`,
    caption: `A notebook that loads the campaign store ${storePath}`,
    cells: [
      { kind: 'markdown', source: CAUTION_OWN },
      {
        kind: 'markdown',
        source:
          `# Campaign store ${markdownCode(storePath)}\n\n` +
          'The dashboard reads the store as it is on disk: the requirement verdicts with their ' +
          'intervals, each metric against its requirement, percentile bands of the recorded ' +
          'signals, a metric against a drawn input (click a point to replay that trial alone), ' +
          'the inputs that drive the results and, for a grid over headings and sea states, ' +
          'the operability chart. A campaign still running shows the trials finished so far; ' +
          'run the cell again to see more.'
      },
      {
        kind: 'code',
        source:
          'from wavebench.ui import CampaignDashboard\n' +
          '\n' +
          `dash = CampaignDashboard.from_store(${quoted})\n` +
          'dash'
      }
    ]
  };
}
