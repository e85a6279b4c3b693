// Pure helpers (no vscode import) that prepare the server's plot result for a
// webview: validate the result and lock the page down with a content security
// policy that allows no scripts and no remote resources.

/** One loop's plot as returned by the server's ringside.plot command. */
export interface LoopPlot {
  name: string;
  svg: string;
}

/** The result of ringside.plot. */
export interface PlotResult {
  loops: LoopPlot[];
  html?: string;
  written?: string[];
}

/** parsePlotResult checks the shape of an untyped command result and throws
 * an Error with a readable message when it is not a plot result. */
export function parsePlotResult(value: unknown): PlotResult {
  if (typeof value !== "object" || value === null) {
    throw new Error("ringside.plot returned no result");
  }
  const v = value as Record<string, unknown>;
  const loops: LoopPlot[] = [];
  if (v.loops !== undefined) {
    if (!Array.isArray(v.loops)) {
      throw new Error("ringside.plot returned a malformed result: 'loops' is not a list");
    }
    for (const item of v.loops) {
      const l = item as Record<string, unknown>;
      if (typeof l !== "object" || l === null || typeof l.name !== "string" || typeof l.svg !== "string") {
        throw new Error("ringside.plot returned a malformed loop entry");
      }
      loops.push({ name: l.name, svg: l.svg });
    }
  }
  const html = typeof v.html === "string" && v.html.trim() !== "" ? v.html : undefined;
  const written = Array.isArray(v.written) ? v.written.filter((w): w is string => typeof w === "string") : undefined;
  if (!html && loops.length === 0) {
    throw new Error("ringside.plot returned neither a page nor any loop plot");
  }
  return { loops, html, written };
}

/** The policy placed in every plot page: nothing may load except inline
 * styles and data: images/fonts (and the webview's own resources, which are
 * limited to none by localResourceRoots). Scripts are not allowed at all. */
export function contentSecurityPolicy(webviewSource: string): string {
  const self = webviewSource ? ` ${webviewSource}` : "";
  return [
    "default-src 'none'",
    `img-src data:${self}`,
    `style-src 'unsafe-inline'${self}`,
    "font-src data:",
  ].join("; ");
}

function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

/** pageFromLoops builds a page from the SVGs when the server sent no html. */
export function pageFromLoops(loops: LoopPlot[]): string {
  const sections = loops
    .map((l) => `<section><h2>${escapeHtml(l.name)}</h2>\n${l.svg}\n</section>`)
    .join("\n");
  return `<!doctype html>\n<html><head><meta charset="utf-8"><title>Loop plots</title></head>\n<body>\n${sections}\n</body></html>\n`;
}

/** withPolicy inserts the CSP meta tag as the first element of <head> (adding
 * a head when there is none). A page may already carry its own policy; both
 * then apply, so the result is never looser than ours. */
export function withPolicy(html: string, policy: string): string {
  const meta = `<meta http-equiv="Content-Security-Policy" content="${escapeHtml(policy)}">`;
  const head = /<head(\s[^>]*)?>/i.exec(html);
  if (head) {
    const at = head.index + head[0].length;
    return html.slice(0, at) + meta + html.slice(at);
  }
  const root = /<html(\s[^>]*)?>/i.exec(html);
  if (root) {
    const at = root.index + root[0].length;
    return html.slice(0, at) + `<head>${meta}</head>` + html.slice(at);
  }
  const doctype = /^\s*<!doctype[^>]*>/i.exec(html);
  const at = doctype ? doctype[0].length : 0;
  return html.slice(0, at) + `<head>${meta}</head>` + html.slice(at);
}

/** plotPage is the html to show for a plot result. */
export function plotPage(result: PlotResult, webviewSource: string): string {
  const html = result.html ?? pageFromLoops(result.loops);
  return withPolicy(html, contentSecurityPolicy(webviewSource));
}
