// The loop diagram's live view (wavebench.ui.loop_diagram.LoopDiagram).
//
// Python computes every box, line, word and colour (loop_layout) and sends
// them as the "layout" trait; this module only draws them as SVG, in the same
// order and with the same attributes as the static twin (loop_svg).

const SVG_NS = "http://www.w3.org/2000/svg";

function make(tag, attrs, parent, text) {
  const node = document.createElementNS(SVG_NS, tag);
  for (const [key, value] of Object.entries(attrs)) {
    if (value !== undefined && value !== null && value !== "") node.setAttribute(key, String(value));
  }
  if (text !== undefined) node.textContent = text;
  if (parent) parent.appendChild(node);
  return node;
}

function pointsText(points) {
  return points.map(([x, y]) => `${x},${y}`).join(" ");
}

function drawNode(svg, n, layout) {
  const st = layout.styles[n.state];
  const group = n.kind === "role" && n.role === "sensors";
  const fill = group && n.state === "used" ? layout.group_style.fill : st.fill;
  const g = make("g", { class: `wb-node wb-${n.state}`, "data-id": n.id }, svg);
  make("title", {}, g, n.title);
  make("rect", {
    x: n.x, y: n.y, width: n.w, height: n.h, rx: 5, fill, stroke: st.stroke,
    "stroke-width": 1.3, "stroke-dasharray": st.dash,
  }, g);
  if (n.kind === "sensor") {
    const ty = n.y + n.h / 2 + 4;
    make("text", { x: n.x + 7, y: ty, "font-size": 11, fill: st.text }, g, n.label);
    make("text", {
      x: n.x + n.w - 7, y: ty, "font-size": 10, "text-anchor": "end", fill: st.text, "font-style": "italic",
    }, g, n.detail);
  } else if (group) {
    make("text", {
      x: n.x + 10, y: n.y + 19, "font-size": 12, "font-weight": 600, fill: layout.group_style.text,
    }, g, n.label);
  } else {
    const cx = n.x + n.w / 2;
    const top = n.y + n.h / 2 - (n.h < 40 ? 3 : 5);
    make("text", {
      x: cx, y: top, "font-size": 12, "font-weight": 600, "text-anchor": "middle", fill: st.text,
    }, g, n.label);
    make("text", { x: cx, y: top + 14, "font-size": 10.5, "text-anchor": "middle", fill: st.text }, g, n.detail);
  }
  return g;
}

function drawEdge(svg, e, layout) {
  const st = layout.styles[e.state];
  const g = make("g", { class: `wb-edge wb-${e.state}`, "data-id": e.id }, svg);
  make("polyline", {
    points: pointsText(e.points), fill: "none", stroke: st.edge, "stroke-width": 1.4, "stroke-dasharray": st.dash,
  }, g);
  make("polygon", { points: pointsText(e.arrow), fill: st.edge }, g);
  if (e.label) {
    make("text", {
      x: e.label_xy[0], y: e.label_xy[1], "font-size": 10, "text-anchor": e.label_anchor || "start", fill: st.edge,
    }, g, e.label);
  }
  return g;
}

export function draw(host, layout) {
  while (host.firstChild) host.removeChild(host.firstChild);
  if (!layout || !layout.nodes) return null;
  const { width, height } = layout;
  const svg = make("svg", {
    class: "wb-loop", width, height, viewBox: `0 0 ${width} ${height}`, "font-family": layout.font,
    role: "img", "aria-label": "the loop as wired",
  }, host);
  make("rect", { x: 0, y: 0, width, height, fill: "#ffffff" }, svg);
  for (const t of layout.texts) {
    make("text", {
      x: t.x, y: t.y, "font-size": 11, "text-anchor": t.anchor, fill: "#5d6b66", "letter-spacing": 0.4,
    }, svg, t.text);
  }
  const roles = layout.nodes.filter((n) => n.kind === "role");
  const rest = layout.nodes.filter((n) => n.kind !== "role");
  for (const n of roles) drawNode(svg, n, layout);
  for (const e of layout.edges) drawEdge(svg, e, layout);
  for (const n of rest) drawNode(svg, n, layout);
  for (const item of layout.legend) {
    const st = layout.styles[item.state];
    make("rect", {
      x: item.x, y: item.y, width: 22, height: 13, rx: 3, fill: st.fill, stroke: st.stroke,
      "stroke-dasharray": st.dash,
    }, svg);
    make("text", { x: item.x + 28, y: item.y + 10.5, "font-size": 10.5, fill: "#4a5753" }, svg, item.text);
  }
  return svg;
}

export default {
  render({ model, el }) {
    const host = document.createElement("div");
    host.className = "wavebench-loop";
    el.appendChild(host);
    const redraw = () => draw(host, model.get("layout"));
    redraw();
    model.on("change:layout", redraw);
    return () => model.off("change:layout", redraw);
  },
};
