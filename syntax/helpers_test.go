package syntax

import "fmt"

func fmtType(n Node) string { return fmt.Sprintf("%T", n) }
