module github.com/massline/massline

go 1.26.8

require (
	github.com/alecthomas/participle/v2 v2.1.4
	github.com/go-zeromq/zmq4 v0.17.0
	gonum.org/v1/gonum v0.17.0
)

require (
	github.com/go-zeromq/goczmq/v4 v4.2.2 // indirect
	golang.org/x/sync v0.12.0 // indirect
	golang.org/x/text v0.23.0 // indirect
)
