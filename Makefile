# polypledger: build, try, test and package.
#   make demo   install what is missing, build, create demo.db (invented data) and open the app on it
#   make test   install what is missing, then every check CI runs
VERSION ?= $(shell git describe --tags --always --dirty 2>/dev/null || echo dev)
LDFLAGS := -X main.version=$(VERSION)
GO ?= go

.PHONY: build demo test vet fuzz-smoke clean

build:
	scripts/setup-debian
	$(GO) build -ldflags "$(LDFLAGS)" -o polypledger .

demo: build
	test -f demo.db || ./polypledger demo --db demo.db
	./polypledger --db demo.db

test:
	scripts/setup-debian --test
	@unformatted=$$(gofmt -l $$(git ls-files '*.go')); if [ -n "$$unformatted" ]; then echo "gofmt would change:"; echo "$$unformatted"; exit 1; fi
	$(GO) vet ./...
	$(GO) run honnef.co/go/tools/cmd/staticcheck@v0.8.2 ./...
	$(GO) test -count=1 ./...
	@if [ -x scripts/fuzz-smoke ]; then scripts/fuzz-smoke; fi

clean:
	rm -f polypledger
