package server

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"runtime/debug"

	"go.uber.org/zap"
	"go.uber.org/zap/zapcore"
)

// memoryLimit is the soft heap limit of a server left running all day: an
// analysis of a large file allocates several times what it keeps, and
// without a limit the collector lets that garbage double the footprint.
// Near the limit it collects sooner (GOMEMLIMIT overrides it).
const memoryLimit = 40 << 20

// Main runs `ringside serve [--stdio] [--log-file PATH] [--log-level
// LEVEL]`: the protocol on stdin/stdout (stdout carries nothing else), the
// log on stderr or in the file. It returns the process exit status: 0 after
// shutdown then exit, 1 when the session ended without shutdown, 2 for bad
// flags.
func Main(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Bool("stdio", true, "speak the protocol on stdin and stdout (the only transport)")
	logFile := fs.String("log-file", "", "write the log to this file instead of stderr")
	logLevel := fs.String("log-level", "info", "log level: debug, info, warn or error")
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "ringside serve: unexpected argument %q\n", fs.Arg(0))
		return 2
	}
	if os.Getenv("GOMEMLIMIT") == "" {
		debug.SetMemoryLimit(memoryLimit)
	}
	var level zapcore.Level
	if err := level.UnmarshalText([]byte(*logLevel)); err != nil {
		fmt.Fprintf(stderr, "ringside serve: --log-level %q: want debug, info, warn or error\n", *logLevel)
		return 2
	}
	var sink io.Writer = stderr
	if *logFile != "" {
		f, err := os.OpenFile(*logFile, os.O_CREATE|os.O_WRONLY|os.O_APPEND, 0o644)
		if err != nil {
			fmt.Fprintf(stderr, "ringside serve: cannot open log file: %v\n", err)
			return 2
		}
		defer f.Close()
		sink = f
	}
	enc := zapcore.NewConsoleEncoder(zap.NewDevelopmentEncoderConfig())
	logger := zap.New(zapcore.NewCore(enc, zapcore.AddSync(sink), level))
	defer logger.Sync()
	err := Run(context.Background(), stdin, stdout, Config{Logger: logger, Version: Version})
	if err != nil {
		logger.Info("session ended", zap.Error(err))
		return 1
	}
	return 0
}

// Version is the version reported to clients; the command sets it.
var Version = "0.1.0"
