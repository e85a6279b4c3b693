// VS Code client of the ringside language server for .loop files.
//
// It starts `ringside serve` over stdio, passes the analysis settings as
// initializationOptions and again (under "ringside") on every change, and
// shows the server's loop plots (command ringside.plot) in a locked-down
// webview, both from the "Ringside: Show loop plots" command and from the
// server's code lenses.
import * as os from "os";
import * as vscode from "vscode";
import {
  DidChangeConfigurationNotification,
  ExecuteCommandRequest,
  LanguageClient,
  LanguageClientOptions,
  ServerOptions,
} from "vscode-languageclient/node";
import { analysisOptions, serverCommand } from "./settings";
import { parsePlotResult, plotPage } from "./plotPage";

const languageId = "loop";
const plotCommand = "ringside.plot";

let client: LanguageClient | undefined;
let output: vscode.OutputChannel | undefined;
let plotPanel: vscode.WebviewPanel | undefined;

function readSetting(name: string): unknown {
  return vscode.workspace.getConfiguration("ringside").get(name);
}

function firstWorkspaceRoot(): string | undefined {
  const folder = vscode.workspace.workspaceFolders?.[0];
  return folder?.uri.scheme === "file" ? folder.uri.fsPath : undefined;
}

function createClient(): LanguageClient {
  const { command, args } = serverCommand(readSetting, firstWorkspaceRoot(), os.homedir());
  // No transport field: the process speaks LSP on stdin/stdout and the
  // client adds no extra flag to the arguments.
  const serverOptions: ServerOptions = {
    run: { command, args },
    debug: { command, args },
  };
  const clientOptions: LanguageClientOptions = {
    documentSelector: [
      { scheme: "file", language: languageId },
      { scheme: "untitled", language: languageId },
    ],
    initializationOptions: analysisOptions(readSetting),
    outputChannel: output,
    middleware: {
      // The server's code lenses run ringside.plot; show what they return.
      executeCommand: async (cmd, cmdArgs, next) => {
        const result = await next(cmd, cmdArgs);
        if (cmd === plotCommand && result !== undefined && result !== null) {
          showPlots(result);
        }
        return result;
      },
    },
  };
  return new LanguageClient("ringside", "ringside", serverOptions, clientOptions);
}

async function startClient(): Promise<void> {
  const c = createClient();
  client = c;
  try {
    await c.start();
  } catch (err) {
    const { command } = serverCommand(readSetting, firstWorkspaceRoot(), os.homedir());
    const message = err instanceof Error ? err.message : String(err);
    void vscode.window.showErrorMessage(
      `ringside: could not start "${command} serve" (${message}). Install the ringside binary or set ringside.serverPath.`,
    );
  }
}

async function stopClient(): Promise<void> {
  const c = client;
  client = undefined;
  if (c) {
    try {
      await c.stop();
    } catch {
      // A server that never started cannot be stopped; nothing to undo.
    }
  }
}

function showPlots(raw: unknown): void {
  let result;
  try {
    result = parsePlotResult(raw);
  } catch (err) {
    void vscode.window.showErrorMessage(`ringside: ${err instanceof Error ? err.message : String(err)}`);
    return;
  }
  if (!plotPanel) {
    plotPanel = vscode.window.createWebviewPanel(
      "ringside.plots",
      "Loop plots",
      { viewColumn: vscode.ViewColumn.Beside, preserveFocus: true },
      { enableScripts: false, enableCommandUris: false, localResourceRoots: [] },
    );
    plotPanel.onDidDispose(() => {
      plotPanel = undefined;
    });
  }
  plotPanel.webview.html = plotPage(result, plotPanel.webview.cspSource);
  plotPanel.reveal(undefined, true);
}

async function showPlotsForActiveEditor(): Promise<void> {
  const editor = vscode.window.activeTextEditor;
  if (!editor || editor.document.languageId !== languageId) {
    void vscode.window.showInformationMessage("ringside: open a .loop file to plot its loops.");
    return;
  }
  const c = client;
  if (!c || !c.isRunning()) {
    void vscode.window.showErrorMessage("ringside: the language server is not running.");
    return;
  }
  try {
    const result = await vscode.window.withProgress(
      { location: vscode.ProgressLocation.Window, title: "ringside: plotting loops" },
      () =>
        c.sendRequest(ExecuteCommandRequest.type, {
          command: plotCommand,
          arguments: [{ uri: editor.document.uri.toString(), write: false }],
        }),
    );
    showPlots(result);
  } catch (err) {
    void vscode.window.showErrorMessage(`ringside: plotting failed: ${err instanceof Error ? err.message : String(err)}`);
  }
}

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  output = vscode.window.createOutputChannel("ringside");
  context.subscriptions.push(output);
  context.subscriptions.push(
    vscode.commands.registerCommand("ringside.showPlots", showPlotsForActiveEditor),
    vscode.commands.registerCommand("ringside.restartServer", async () => {
      await stopClient();
      await startClient();
    }),
    vscode.workspace.onDidChangeConfiguration(async (e) => {
      if (!e.affectsConfiguration("ringside")) {
        return;
      }
      const restart = ["serverPath", "logFile", "logLevel"].some((k) => e.affectsConfiguration(`ringside.${k}`));
      if (restart) {
        await stopClient();
        await startClient();
        return;
      }
      if (client?.isRunning()) {
        await client.sendNotification(DidChangeConfigurationNotification.type, {
          settings: { ringside: analysisOptions(readSetting) },
        });
      }
    }),
  );
  await startClient();
}

export async function deactivate(): Promise<void> {
  await stopClient();
}
