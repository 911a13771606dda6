module surety

go 1.26

require github.com/sjwhitworth/golearn v0.0.0-20221228163002-74ae077eafb2

require (
	github.com/spf13/pflag v1.1.0 // indirect
	gonum.org/v1/gonum v0.17.0 // indirect
)
