// Package protocol holds the Language Server Protocol (3.17) types the
// ringside server speaks, with their JSON forms.
//
// go.lsp.dev/protocol v0.12.0 is built against jsonrpc2 v0.10 and does not
// compile with the jsonrpc2 v1.0.1 this module uses, and it predates inlay
// hints and position encodings; so the server defines the subset it needs
// here. Field names and JSON keys follow the LSP specification. The package
// knows nothing of .loop files.
package protocol

import "encoding/json"

// Method names.
const (
	MethodInitialize                = "initialize"
	MethodInitialized               = "initialized"
	MethodShutdown                  = "shutdown"
	MethodExit                      = "exit"
	MethodCancelRequest             = "$/cancelRequest"
	MethodSetTrace                  = "$/setTrace"
	MethodProgress                  = "$/progress"
	MethodDidOpen                   = "textDocument/didOpen"
	MethodDidChange                 = "textDocument/didChange"
	MethodDidSave                   = "textDocument/didSave"
	MethodDidClose                  = "textDocument/didClose"
	MethodPublishDiagnostics        = "textDocument/publishDiagnostics"
	MethodHover                     = "textDocument/hover"
	MethodCodeAction                = "textDocument/codeAction"
	MethodDefinition                = "textDocument/definition"
	MethodReferences                = "textDocument/references"
	MethodRename                    = "textDocument/rename"
	MethodPrepareRename             = "textDocument/prepareRename"
	MethodDocumentSymbol            = "textDocument/documentSymbol"
	MethodCompletion                = "textDocument/completion"
	MethodFormatting                = "textDocument/formatting"
	MethodRangeFormatting           = "textDocument/rangeFormatting"
	MethodSemanticTokensFull        = "textDocument/semanticTokens/full"
	MethodFoldingRange              = "textDocument/foldingRange"
	MethodCodeLens                  = "textDocument/codeLens"
	MethodInlayHint                 = "textDocument/inlayHint"
	MethodWorkspaceSymbol           = "workspace/symbol"
	MethodExecuteCommand            = "workspace/executeCommand"
	MethodDidChangeConfiguration    = "workspace/didChangeConfiguration"
	MethodDidChangeWorkspaceFolders = "workspace/didChangeWorkspaceFolders"
	MethodDidChangeWatchedFiles     = "workspace/didChangeWatchedFiles"
	MethodWorkDoneProgressCreate    = "window/workDoneProgress/create"
	MethodLogMessage                = "window/logMessage"
)

// Error codes of the LSP beyond JSON-RPC's own.
const (
	CodeServerNotInitialized = -32002
	CodeRequestCancelled     = -32800
	CodeRequestFailed        = -32803
)

// DocumentURI is a file URI.
type DocumentURI string

// Position is a zero-based line and a column in the negotiated encoding.
type Position struct {
	Line      uint32 `json:"line"`
	Character uint32 `json:"character"`
}

// Range is a half-open range of positions.
type Range struct {
	Start Position `json:"start"`
	End   Position `json:"end"`
}

// Location is a range in a document.
type Location struct {
	URI   DocumentURI `json:"uri"`
	Range Range       `json:"range"`
}

// Position encodings (3.17).
const (
	EncodingUTF8  = "utf-8"
	EncodingUTF16 = "utf-16"
	EncodingUTF32 = "utf-32"
)

// ---- lifecycle ----

// InitializeParams is the subset of the client's initialize request the server reads.
type InitializeParams struct {
	ProcessID             *int               `json:"processId"`
	RootURI               DocumentURI        `json:"rootUri,omitempty"`
	RootPath              string             `json:"rootPath,omitempty"`
	WorkspaceFolders      []WorkspaceFolder  `json:"workspaceFolders,omitempty"`
	InitializationOptions json.RawMessage    `json:"initializationOptions,omitempty"`
	Capabilities          ClientCapabilities `json:"capabilities"`
}

// WorkspaceFolder is one folder of the workspace.
type WorkspaceFolder struct {
	URI  DocumentURI `json:"uri"`
	Name string      `json:"name"`
}

// ClientCapabilities is the subset the server looks at.
type ClientCapabilities struct {
	General *struct {
		PositionEncodings []string `json:"positionEncodings,omitempty"`
	} `json:"general,omitempty"`
	Window *struct {
		WorkDoneProgress bool `json:"workDoneProgress,omitempty"`
	} `json:"window,omitempty"`
	TextDocument *struct {
		DocumentSymbol *struct {
			HierarchicalDocumentSymbolSupport bool `json:"hierarchicalDocumentSymbolSupport,omitempty"`
		} `json:"documentSymbol,omitempty"`
	} `json:"textDocument,omitempty"`
}

// InitializeResult answers initialize.
type InitializeResult struct {
	Capabilities ServerCapabilities `json:"capabilities"`
	ServerInfo   *ServerInfo        `json:"serverInfo,omitempty"`
}

// ServerInfo names the server.
type ServerInfo struct {
	Name    string `json:"name"`
	Version string `json:"version,omitempty"`
}

// ServerCapabilities announces what the server does.
type ServerCapabilities struct {
	PositionEncoding                string                   `json:"positionEncoding,omitempty"`
	TextDocumentSync                *TextDocumentSyncOptions `json:"textDocumentSync,omitempty"`
	HoverProvider                   bool                     `json:"hoverProvider,omitempty"`
	CompletionProvider              *CompletionOptions       `json:"completionProvider,omitempty"`
	DefinitionProvider              bool                     `json:"definitionProvider,omitempty"`
	ReferencesProvider              bool                     `json:"referencesProvider,omitempty"`
	DocumentSymbolProvider          bool                     `json:"documentSymbolProvider,omitempty"`
	WorkspaceSymbolProvider         bool                     `json:"workspaceSymbolProvider,omitempty"`
	CodeActionProvider              *CodeActionOptions       `json:"codeActionProvider,omitempty"`
	CodeLensProvider                *CodeLensOptions         `json:"codeLensProvider,omitempty"`
	DocumentFormattingProvider      bool                     `json:"documentFormattingProvider,omitempty"`
	DocumentRangeFormattingProvider bool                     `json:"documentRangeFormattingProvider,omitempty"`
	RenameProvider                  *RenameOptions           `json:"renameProvider,omitempty"`
	FoldingRangeProvider            bool                     `json:"foldingRangeProvider,omitempty"`
	ExecuteCommandProvider          *ExecuteCommandOptions   `json:"executeCommandProvider,omitempty"`
	SemanticTokensProvider          *SemanticTokensOptions   `json:"semanticTokensProvider,omitempty"`
	InlayHintProvider               bool                     `json:"inlayHintProvider,omitempty"`
	Workspace                       *WorkspaceCapabilities   `json:"workspace,omitempty"`
}

// Text document sync kinds.
const (
	SyncNone        = 0
	SyncFull        = 1
	SyncIncremental = 2
)

// TextDocumentSyncOptions says how documents are synchronised.
type TextDocumentSyncOptions struct {
	OpenClose bool         `json:"openClose"`
	Change    int          `json:"change"`
	Save      *SaveOptions `json:"save,omitempty"`
}

// SaveOptions asks for didSave.
type SaveOptions struct {
	IncludeText bool `json:"includeText"`
}

// CompletionOptions announces completion.
type CompletionOptions struct {
	TriggerCharacters []string `json:"triggerCharacters,omitempty"`
}

// CodeActionOptions announces code actions.
type CodeActionOptions struct {
	CodeActionKinds []string `json:"codeActionKinds,omitempty"`
}

// CodeLensOptions announces code lenses.
type CodeLensOptions struct {
	ResolveProvider bool `json:"resolveProvider"`
}

// RenameOptions announces rename.
type RenameOptions struct {
	PrepareProvider bool `json:"prepareProvider"`
}

// ExecuteCommandOptions lists the server's commands.
type ExecuteCommandOptions struct {
	Commands []string `json:"commands"`
}

// SemanticTokensOptions announces semantic tokens.
type SemanticTokensOptions struct {
	Legend SemanticTokensLegend `json:"legend"`
	Full   bool                 `json:"full"`
	Range  bool                 `json:"range"`
}

// SemanticTokensLegend names the token types and modifiers by index.
type SemanticTokensLegend struct {
	TokenTypes     []string `json:"tokenTypes"`
	TokenModifiers []string `json:"tokenModifiers"`
}

// WorkspaceCapabilities announces workspace folder support.
type WorkspaceCapabilities struct {
	WorkspaceFolders *struct {
		Supported           bool `json:"supported"`
		ChangeNotifications bool `json:"changeNotifications"`
	} `json:"workspaceFolders,omitempty"`
}

// ---- text synchronisation ----

// TextDocumentItem is an opened document.
type TextDocumentItem struct {
	URI        DocumentURI `json:"uri"`
	LanguageID string      `json:"languageId"`
	Version    int32       `json:"version"`
	Text       string      `json:"text"`
}

// TextDocumentIdentifier names a document.
type TextDocumentIdentifier struct {
	URI DocumentURI `json:"uri"`
}

// VersionedTextDocumentIdentifier names a version of a document.
type VersionedTextDocumentIdentifier struct {
	URI     DocumentURI `json:"uri"`
	Version int32       `json:"version"`
}

// DidOpenTextDocumentParams of textDocument/didOpen.
type DidOpenTextDocumentParams struct {
	TextDocument TextDocumentItem `json:"textDocument"`
}

// TextDocumentContentChangeEvent is a whole-text or ranged change.
type TextDocumentContentChangeEvent struct {
	Range *Range `json:"range,omitempty"`
	Text  string `json:"text"`
}

// DidChangeTextDocumentParams of textDocument/didChange.
type DidChangeTextDocumentParams struct {
	TextDocument   VersionedTextDocumentIdentifier  `json:"textDocument"`
	ContentChanges []TextDocumentContentChangeEvent `json:"contentChanges"`
}

// DidSaveTextDocumentParams of textDocument/didSave.
type DidSaveTextDocumentParams struct {
	TextDocument TextDocumentIdentifier `json:"textDocument"`
	Text         *string                `json:"text,omitempty"`
}

// DidCloseTextDocumentParams of textDocument/didClose.
type DidCloseTextDocumentParams struct {
	TextDocument TextDocumentIdentifier `json:"textDocument"`
}

// TextDocumentPositionParams is a position in a document.
type TextDocumentPositionParams struct {
	TextDocument TextDocumentIdentifier `json:"textDocument"`
	Position     Position               `json:"position"`
}

// ---- diagnostics ----

// Diagnostic severities.
const (
	SeverityError       = 1
	SeverityWarning     = 2
	SeverityInformation = 3
	SeverityHint        = 4
)

// Diagnostic is one problem in a document.
type Diagnostic struct {
	Range              Range                          `json:"range"`
	Severity           int                            `json:"severity,omitempty"`
	Code               string                         `json:"code,omitempty"`
	Source             string                         `json:"source,omitempty"`
	Message            string                         `json:"message"`
	RelatedInformation []DiagnosticRelatedInformation `json:"relatedInformation,omitempty"`
	Data               json.RawMessage                `json:"data,omitempty"`
}

// DiagnosticRelatedInformation points at another place.
type DiagnosticRelatedInformation struct {
	Location Location `json:"location"`
	Message  string   `json:"message"`
}

// PublishDiagnosticsParams of textDocument/publishDiagnostics.
type PublishDiagnosticsParams struct {
	URI         DocumentURI  `json:"uri"`
	Version     *int32       `json:"version,omitempty"`
	Diagnostics []Diagnostic `json:"diagnostics"`
}

// ---- language features ----

// MarkupContent is markdown or plain text.
type MarkupContent struct {
	Kind  string `json:"kind"`
	Value string `json:"value"`
}

// Hover answers textDocument/hover.
type Hover struct {
	Contents MarkupContent `json:"contents"`
	Range    *Range        `json:"range,omitempty"`
}

// TextEdit replaces a range.
type TextEdit struct {
	Range   Range  `json:"range"`
	NewText string `json:"newText"`
}

// WorkspaceEdit is a set of edits by document.
type WorkspaceEdit struct {
	Changes map[DocumentURI][]TextEdit `json:"changes"`
}

// CodeActionParams of textDocument/codeAction.
type CodeActionParams struct {
	TextDocument TextDocumentIdentifier `json:"textDocument"`
	Range        Range                  `json:"range"`
	Context      CodeActionContext      `json:"context"`
}

// CodeActionContext carries the diagnostics at the range.
type CodeActionContext struct {
	Diagnostics []Diagnostic `json:"diagnostics"`
	Only        []string     `json:"only,omitempty"`
}

// CodeActionQuickFix is the quick-fix kind.
const CodeActionQuickFix = "quickfix"

// CodeAction is one suggested change.
type CodeAction struct {
	Title       string         `json:"title"`
	Kind        string         `json:"kind,omitempty"`
	Diagnostics []Diagnostic   `json:"diagnostics,omitempty"`
	IsPreferred bool           `json:"isPreferred,omitempty"`
	Edit        *WorkspaceEdit `json:"edit,omitempty"`
}

// ReferenceParams of textDocument/references.
type ReferenceParams struct {
	TextDocumentPositionParams
	Context struct {
		IncludeDeclaration bool `json:"includeDeclaration"`
	} `json:"context"`
}

// RenameParams of textDocument/rename.
type RenameParams struct {
	TextDocumentPositionParams
	NewName string `json:"newName"`
}

// Symbol kinds used by the server.
const (
	SymbolKindModule   = 2
	SymbolKindFunction = 12
	SymbolKindVariable = 13
	SymbolKindConstant = 14
	SymbolKindEvent    = 24
)

// DocumentSymbol is an outline entry.
type DocumentSymbol struct {
	Name           string           `json:"name"`
	Detail         string           `json:"detail,omitempty"`
	Kind           int              `json:"kind"`
	Range          Range            `json:"range"`
	SelectionRange Range            `json:"selectionRange"`
	Children       []DocumentSymbol `json:"children,omitempty"`
}

// WorkspaceSymbolParams of workspace/symbol.
type WorkspaceSymbolParams struct {
	Query string `json:"query"`
}

// SymbolInformation is a workspace symbol.
type SymbolInformation struct {
	Name          string   `json:"name"`
	Kind          int      `json:"kind"`
	Location      Location `json:"location"`
	ContainerName string   `json:"containerName,omitempty"`
}

// Completion item kinds used by the server.
const (
	CompletionKindFunction = 3
	CompletionKindVariable = 6
	CompletionKindUnit     = 11
	CompletionKindValue    = 12
	CompletionKindEnum     = 13
	CompletionKindKeyword  = 14
	CompletionKindConstant = 21
)

// CompletionItem is one completion.
type CompletionItem struct {
	Label  string `json:"label"`
	Kind   int    `json:"kind,omitempty"`
	Detail string `json:"detail,omitempty"`
}

// CompletionList answers textDocument/completion.
type CompletionList struct {
	IsIncomplete bool             `json:"isIncomplete"`
	Items        []CompletionItem `json:"items"`
}

// DocumentFormattingParams of textDocument/formatting.
type DocumentFormattingParams struct {
	TextDocument TextDocumentIdentifier `json:"textDocument"`
}

// DocumentRangeFormattingParams of textDocument/rangeFormatting.
type DocumentRangeFormattingParams struct {
	TextDocument TextDocumentIdentifier `json:"textDocument"`
	Range        Range                  `json:"range"`
}

// SemanticTokens answers textDocument/semanticTokens/full.
type SemanticTokens struct {
	Data []uint32 `json:"data"`
}

// FoldingRange is a foldable region of lines.
type FoldingRange struct {
	StartLine uint32 `json:"startLine"`
	EndLine   uint32 `json:"endLine"`
	Kind      string `json:"kind,omitempty"`
}

// Command is a command the client may run.
type Command struct {
	Title     string `json:"title"`
	Command   string `json:"command"`
	Arguments []any  `json:"arguments,omitempty"`
}

// CodeLens is a command shown above a range.
type CodeLens struct {
	Range   Range    `json:"range"`
	Command *Command `json:"command,omitempty"`
}

// InlayHintParams of textDocument/inlayHint (3.17).
type InlayHintParams struct {
	TextDocument TextDocumentIdentifier `json:"textDocument"`
	Range        Range                  `json:"range"`
}

// InlayHint is a label shown inline (3.17); Kind 1 is a type hint, 2 a parameter hint.
type InlayHint struct {
	Position    Position `json:"position"`
	Label       string   `json:"label"`
	Kind        int      `json:"kind,omitempty"`
	PaddingLeft bool     `json:"paddingLeft,omitempty"`
}

// ExecuteCommandParams of workspace/executeCommand.
type ExecuteCommandParams struct {
	Command   string            `json:"command"`
	Arguments []json.RawMessage `json:"arguments,omitempty"`
}

// DidChangeConfigurationParams of workspace/didChangeConfiguration.
type DidChangeConfigurationParams struct {
	Settings json.RawMessage `json:"settings"`
}

// DidChangeWorkspaceFoldersParams of workspace/didChangeWorkspaceFolders.
type DidChangeWorkspaceFoldersParams struct {
	Event struct {
		Added   []WorkspaceFolder `json:"added"`
		Removed []WorkspaceFolder `json:"removed"`
	} `json:"event"`
}

// ---- progress ----

// WorkDoneProgressCreateParams of window/workDoneProgress/create.
type WorkDoneProgressCreateParams struct {
	Token string `json:"token"`
}

// ProgressParams of $/progress.
type ProgressParams struct {
	Token string `json:"token"`
	Value any    `json:"value"`
}

// WorkDoneProgressBegin, Report and End are the values of $/progress.
type WorkDoneProgressBegin struct {
	Kind        string `json:"kind"` // "begin"
	Title       string `json:"title"`
	Message     string `json:"message,omitempty"`
	Percentage  *int   `json:"percentage,omitempty"`
	Cancellable bool   `json:"cancellable"`
}

// WorkDoneProgressReport reports progress.
type WorkDoneProgressReport struct {
	Kind       string `json:"kind"` // "report"
	Message    string `json:"message,omitempty"`
	Percentage *int   `json:"percentage,omitempty"`
}

// WorkDoneProgressEnd ends progress.
type WorkDoneProgressEnd struct {
	Kind    string `json:"kind"` // "end"
	Message string `json:"message,omitempty"`
}

// CancelParams of $/cancelRequest: the id is a number or a string.
type CancelParams struct {
	ID json.RawMessage `json:"id"`
}
