module github.com/thrustmap/thrustmap

go 1.26

require gonum.org/v1/gonum v0.17.0

require github.com/pelletier/go-toml/v2 v2.4.3 // indirect
