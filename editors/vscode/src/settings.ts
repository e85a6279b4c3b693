// Pure helpers (no vscode import) that turn the extension's settings into the
// server's command line and its analysis options, so they can be unit-tested
// with node:test.
import * as path from "path";

/** Analysis options the server reads from initializationOptions and from
 * workspace/didChangeConfiguration (under the key "ringside"). */
export interface AnalysisOptions {
  gainMarginDb: number;
  phaseMarginDeg: number;
  trigger: "save" | "change";
  tolerance: number;
}

/** Defaults, the same as in package.json's contributes.configuration. */
export const defaultAnalysisOptions: AnalysisOptions = {
  gainMarginDb: 6,
  phaseMarginDeg: 30,
  trigger: "change",
  tolerance: 1e-6,
};

/** Reads a setting by its name below "ringside." (for example "trigger"). */
export type SettingReader = (name: string) => unknown;

function finiteOr(value: unknown, fallback: number): number {
  return typeof value === "number" && Number.isFinite(value) ? value : fallback;
}

/** analysisOptions collects the four analysis settings, replacing values of
 * the wrong type (or NaN/Infinity) by their defaults, so the server never
 * receives a malformed option from a hand-edited settings.json. */
export function analysisOptions(read: SettingReader): AnalysisOptions {
  const d = defaultAnalysisOptions;
  const trigger = read("trigger");
  const tolerance = finiteOr(read("tolerance"), d.tolerance);
  return {
    gainMarginDb: finiteOr(read("gainMarginDb"), d.gainMarginDb),
    phaseMarginDeg: finiteOr(read("phaseMarginDeg"), d.phaseMarginDeg),
    trigger: trigger === "save" ? "save" : "change",
    tolerance: tolerance > 0 ? tolerance : d.tolerance,
  };
}

/** How to start the server process. */
export interface ServerCommand {
  command: string;
  args: string[];
}

/** serverCommand builds `<serverPath> serve [--log-file F --log-level L]`.
 * A bare name (no folder part) is left for PATH lookup; "~" expands to home;
 * any other relative path is taken from the first workspace folder. */
export function serverCommand(
  read: SettingReader,
  workspaceRoot: string | undefined,
  home: string,
): ServerCommand {
  const raw = read("serverPath");
  let command = typeof raw === "string" && raw.trim() !== "" ? raw.trim() : "ringside";
  if (command === "~" || command.startsWith("~/")) {
    command = path.join(home, command.slice(1));
  } else if (!path.isAbsolute(command) && /[\\/]/.test(command) && workspaceRoot) {
    command = path.resolve(workspaceRoot, command);
  }
  const args = ["serve"];
  const logFile = read("logFile");
  if (typeof logFile === "string" && logFile.trim() !== "") {
    args.push("--log-file", logFile.trim());
    const level = read("logLevel");
    if (level === "debug" || level === "info" || level === "warn" || level === "error") {
      args.push("--log-level", level);
    }
  }
  return { command, args };
}
