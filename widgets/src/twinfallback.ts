/**
 * The static twin of a wavebench panel where its live widget cannot be drawn.
 *
 * Every wavebench panel is displayed as one output whose mime bundle holds
 * the widget view (`application/vnd.jupyter.widget-view+json`) and a static
 * twin (`text/html`, outer element `<div class="wavebench-twin">`). In a
 * trusted notebook the widget view wins; opened without its widget state (or
 * with no kernel, or after the model is gone) ipywidgets can only draw a line
 * of text in its place. Here each notebook's widget-view renderer is wrapped:
 *
 * - an output whose `text/html` is not a wavebench twin is handed to the
 *   original renderer unchanged (other people's widgets look as before);
 * - a wavebench output gets the original (live) renderer and the twin side by
 *   side; the twin shows while the live renderer's node holds no element
 *   (ipywidgets puts only a text node there while loading and when it cannot
 *   draw the view), the live view shows as soon as it holds one.
 *
 * No message wording of ipywidgets is read: the switch is "has the live node
 * an element child", which holds for every view ipywidgets draws (it adds the
 * view's node there) and for none of its messages (plain text).
 */

import { IRenderMimeRegistry } from '@jupyterlab/rendermime';
import { IRenderMime } from '@jupyterlab/rendermime-interfaces';
import { MessageLoop } from '@lumino/messaging';
import { ISignal, Signal } from '@lumino/signaling';
import { Panel, Widget } from '@lumino/widgets';

/** The mime type of a widget view (ipywidgets). */
export const WIDGET_VIEW_MIME = 'application/vnd.jupyter.widget-view+json';

/** CSS class on the outer element of every wavebench static twin (see wavebench/ui/twin.py). */
export const TWIN_CLASS = 'wavebench-twin';

const TWIN_OUTER = new RegExp(
  `^\\s*<div\\b[^>]*\\bclass\\s*=\\s*["']([^"']*\\s)?${TWIN_CLASS}(\\s[^"']*)?["']`,
  'i'
);

/**
 * Whether an output's `text/html` is a wavebench static twin: its outer
 * element is a `<div>` with the class `wavebench-twin`.
 *
 * @param html - the bundle's `text/html` entry (a string, or the list of
 *   lines a notebook file may store); anything else is not a twin.
 */
export function isTwinHtml(html: unknown): boolean {
  const text = Array.isArray(html) ? html.join('') : html;
  return typeof text === 'string' && TWIN_OUTER.test(text);
}

/**
 * The current original (ipywidgets) widget-view factory of one rendermime
 * registry; tells the renderers made from it when ipywidgets replaces it.
 */
class LiveFactorySlot {
  constructor(factory: IRenderMime.IRendererFactory) {
    this._factory = factory;
  }

  get factory(): IRenderMime.IRendererFactory {
    return this._factory;
  }

  set factory(value: IRenderMime.IRendererFactory) {
    this._factory = value;
    this._changed.emit(value);
  }

  /** Emitted with the new original factory. */
  get changed(): ISignal<this, IRenderMime.IRendererFactory> {
    return this._changed;
  }

  private _factory: IRenderMime.IRendererFactory;
  private _changed = new Signal<this, IRenderMime.IRendererFactory>(this);
}

/** Our wrapper factories, mapped to the original factory each wraps. */
const ORIGINAL = new WeakMap<IRenderMime.IRendererFactory, IRenderMime.IRendererFactory>();

/** The registries already handled by {@link installTwinFallback}. */
const INSTALLED = new WeakSet<IRenderMimeRegistry>();

/**
 * A renderer for widget views that shows a wavebench panel's static twin
 * until (and unless) the live view is drawn.
 */
export class TwinFallbackRenderer extends Panel implements IRenderMime.IRenderer {
  /**
   * @param options - the renderer options the registry passes (for the live renderer).
   * @param slot - the registry's current original widget-view factory.
   * @param rendermime - the registry; makes the `text/html` renderer of the twin.
   */
  constructor(
    options: IRenderMime.IRendererOptions,
    slot: LiveFactorySlot,
    rendermime: IRenderMimeRegistry
  ) {
    super();
    this.addClass('wb-TwinFallback');
    this._options = options;
    this._slot = slot;
    this._rendermime = rendermime;
    this._observer = new MutationObserver(() => this._update());
    this._live = this._createLive();
    slot.changed.connect(this._onLiveFactoryChanged, this);
  }

  /** The live (ipywidgets) renderer inside. */
  get live(): IRenderMime.IRenderer {
    return this._live;
  }

  /** Whether the twin is shown now (the live renderer has drawn nothing yet). */
  get showsTwin(): boolean {
    return this.hasClass('wb-mod-twin');
  }

  async renderModel(model: IRenderMime.IMimeModel): Promise<void> {
    this._model = model;
    if (!isTwinHtml(model.data['text/html'])) {
      // not ours: exactly the original renderer (its promise, its errors)
      this._disposeTwin();
      this._update();
      return this._live.renderModel(model);
    }
    const twin = this._twin ?? this._createTwin();
    const live = this._renderLive(model);
    this._update();
    await twin.renderModel(model);
    await live;
  }

  dispose(): void {
    if (this.isDisposed) {
      return;
    }
    this._observer.disconnect();
    this._slot.changed.disconnect(this._onLiveFactoryChanged, this);
    this._model = null;
    super.dispose(); // disposes the live renderer, the twin and the note (Panel children)
  }

  /** Render the live view; with a twin at hand its failure only goes to the console. */
  private _renderLive(model: IRenderMime.IMimeModel): Promise<void> {
    return this._live.renderModel(model).catch(err => {
      console.error('wavebench: the live panel could not be drawn; its static twin stays.', err);
    });
  }

  private _createLive(): IRenderMime.IRenderer {
    const live = this._slot.factory.createRenderer({
      ...this._options,
      mimeType: WIDGET_VIEW_MIME
    });
    live.addClass('wb-TwinFallback-live');
    this.insertWidget(0, live);
    this._observer.observe(live.node, {
      childList: true,
      attributes: true,
      attributeFilter: ['class']
    });
    return live;
  }

  private _createTwin(): IRenderMime.IRenderer {
    const note = new Widget();
    note.addClass('wb-TwinFallback-note');
    note.node.textContent = 'Static view of this panel: run the cell for the live controls.';
    const twin = this._rendermime.createRenderer('text/html');
    twin.addClass('wb-TwinFallback-twin');
    this.addWidget(note);
    this.addWidget(twin);
    this._note = note;
    this._twin = twin;
    return twin;
  }

  private _disposeTwin(): void {
    this._twin?.dispose();
    this._note?.dispose();
    this._twin = null;
    this._note = null;
  }

  /**
   * ipywidgets replaced its widget-view factory in this registry (it does so
   * once the notebook's kernel is there, with a factory that knows the
   * widget manager). A live renderer that has drawn nothing yet is made again
   * from the new factory and given the model again; one showing a view stays.
   */
  private _onLiveFactoryChanged(): void {
    if (this.isDisposed || this._live.node.firstElementChild !== null) {
      return;
    }
    this._observer.disconnect();
    this._live.dispose();
    this._live = this._createLive();
    const model = this._model;
    if (model !== null) {
      const rendering = isTwinHtml(model.data['text/html'])
        ? this._renderLive(model)
        : this._live.renderModel(model);
      void rendering.catch(err => console.error(err));
    }
    this._update();
  }

  /** Show the twin or the live view, from what the live renderer's node holds now. */
  private _update(): void {
    if (this.isDisposed) {
      return;
    }
    // the live renderer hides itself when its view was removed (model_id ''): hide too
    if (this._live.isHidden !== this.isHidden) {
      this.setHidden(this._live.isHidden);
    }
    const twin = this._twin !== null && this._live.node.firstElementChild === null;
    if (twin === this.hasClass('wb-mod-twin')) {
      return;
    }
    this.toggleClass('wb-mod-twin', twin);
    if (!twin) {
      // the view was attached while its node was not displayed: let it measure itself again
      MessageLoop.sendMessage(this._live, Widget.ResizeMessage.UnknownSize);
    }
  }

  private _options: IRenderMime.IRendererOptions;
  private _slot: LiveFactorySlot;
  private _rendermime: IRenderMimeRegistry;
  private _observer: MutationObserver;
  private _live: IRenderMime.IRenderer;
  private _twin: IRenderMime.IRenderer | null = null;
  private _note: Widget | null = null;
  private _model: IRenderMime.IMimeModel | null = null;
}

function wrapperFactory(
  original: IRenderMime.IRendererFactory,
  slot: LiveFactorySlot,
  rendermime: IRenderMimeRegistry
): IRenderMime.IRendererFactory {
  const factory: IRenderMime.IRendererFactory = {
    safe: original.safe,
    mimeTypes: [WIDGET_VIEW_MIME],
    defaultRank: original.defaultRank,
    createRenderer: options => new TwinFallbackRenderer(options, slot, rendermime)
  };
  ORIGINAL.set(factory, original);
  return factory;
}

/**
 * Wrap the widget-view renderer of one rendermime registry (a notebook's),
 * now and whenever a widget-view factory is added to it later.
 *
 * ipywidgets first renders a notebook's widget outputs with a placeholder
 * factory copied from the application's registry, and replaces it by
 * `removeMimeType` + `addFactory` on the notebook's registry once the kernel
 * is there. Its replacement is caught by wrapping this registry's
 * `addFactory` (on this one object only), so the order in which the plugins
 * start or the kernel comes does not matter. The wrapper keeps the original's
 * `safe` flag and rank. Calling this twice on a registry does nothing.
 *
 * @param rendermime - the registry, typically `NotebookPanel.content.rendermime`.
 */
export function installTwinFallback(rendermime: IRenderMimeRegistry): void {
  if (INSTALLED.has(rendermime)) {
    return;
  }
  INSTALLED.add(rendermime);
  const addFactory = rendermime.addFactory.bind(rendermime);
  let slot: LiveFactorySlot | null = null;
  const wrap = (original: IRenderMime.IRendererFactory): void => {
    const rank = rendermime.getRank(WIDGET_VIEW_MIME);
    if (slot === null) {
      slot = new LiveFactorySlot(original);
    }
    addFactory(wrapperFactory(original, slot, rendermime), rank);
    if (slot.factory !== original) {
      slot.factory = original; // renderers still waiting make their live part again
    }
  };
  const current = rendermime.getFactory(WIDGET_VIEW_MIME);
  if (current !== undefined) {
    // a registry cloned from one handled here holds our wrapper: wrap its original instead
    wrap(ORIGINAL.get(current) ?? current);
  }
  rendermime.addFactory = (factory: IRenderMime.IRendererFactory, rank?: number): void => {
    addFactory(factory, rank);
    if (factory.mimeTypes.includes(WIDGET_VIEW_MIME) && !ORIGINAL.has(factory)) {
      wrap(factory);
    }
  };
}
