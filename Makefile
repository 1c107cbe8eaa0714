# polypledger: build, try, test and package.
#   make demo   install what is missing, build, create demo.db (invented data) and open the app on it
#   make test   install what is missing, then every check CI runs (the
#               end-to-end tests in e2e/ drive the real app under Xvfb and
#               keep a screenshot of every screen in dist/e2e/)
#   make dist-linux     dist/polypledger-VERSION-linux-amd64.tar.gz (binary, desktop entry, icon, notes)
#   make dist-windows   dist/polypledger-VERSION-windows-amd64.zip (cross-built with MinGW-w64)
#   make check-dist     check that the archives hold what they claim (scripts/check-dist)
#   make icon           redraw the icon files from assets/icon
# VERSION is the tag on HEAD when there is one, else FyneApp.toml's version
# followed by "+" and the commit (and ".dirty" for uncommitted changes).
APP_VERSION := $(shell sed -n 's/^ *Version *= *"\([^"]*\)".*/\1/p' FyneApp.toml)
ifeq ($(origin VERSION),undefined)
VERSION := $(shell git describe --tags --exact-match 2>/dev/null || { c=$$(git rev-parse --short HEAD 2>/dev/null) && echo "$(APP_VERSION)+$$c$$(git diff --quiet HEAD 2>/dev/null || echo .dirty)"; } || echo "$(APP_VERSION)+dev")
endif
LDFLAGS := -X main.version=$(VERSION)
# Release archives also drop the symbol table and debug information (-s -w),
# which takes the Windows executable from about 70 MB to 40 MB; a panic still
# prints its stack trace, only a debugger loses the symbols.
DIST_LDFLAGS := $(LDFLAGS) -s -w
GO ?= go
DIST := dist
LINUX_DIR := polypledger-$(VERSION)-linux-amd64
WINDOWS_DIR := polypledger-$(VERSION)-windows-amd64

.PHONY: build demo test vet fuzz-smoke clean dist-linux dist-windows check-dist icon

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

# The dist builds are plain "go build" runs with the same compiler flags as
# "make build" (only the link differs), so they reuse the build cache (a cold
# Windows build takes about 11 minutes on 2 cores, a warm one well under a
# minute).
dist-linux:
	scripts/setup-debian
	rm -rf $(DIST)/$(LINUX_DIR) $(DIST)/$(LINUX_DIR).tar.gz
	mkdir -p $(DIST)/$(LINUX_DIR)
	CGO_ENABLED=1 GOOS=linux GOARCH=amd64 $(GO) build -ldflags "$(DIST_LDFLAGS)" -o $(DIST)/$(LINUX_DIR)/polypledger .
	cp packaging/polypledger.desktop $(DIST)/$(LINUX_DIR)/polypledger.desktop
	cp assets/icon.png $(DIST)/$(LINUX_DIR)/polypledger.png
	cp packaging/INSTALL-linux.txt $(DIST)/$(LINUX_DIR)/INSTALL.txt
	cp README.md LICENSE $(DIST)/$(LINUX_DIR)/
	tar -C $(DIST) --sort=name --owner=0 --group=0 --numeric-owner -czf $(DIST)/$(LINUX_DIR).tar.gz $(LINUX_DIR)
	@echo "wrote $(DIST)/$(LINUX_DIR).tar.gz"

# A console program on purpose (no -H windowsgui): the same executable runs
# the commands in a terminal and opens the window when started with none.
dist-windows:
	scripts/setup-debian --dist
	rm -rf $(DIST)/$(WINDOWS_DIR) $(DIST)/$(WINDOWS_DIR).zip
	mkdir -p $(DIST)/$(WINDOWS_DIR)
	CGO_ENABLED=1 GOOS=windows GOARCH=amd64 CC=x86_64-w64-mingw32-gcc $(GO) build -ldflags "$(DIST_LDFLAGS)" -o $(DIST)/$(WINDOWS_DIR)/polypledger.exe .
	sed 's/$$/\r/' packaging/README-windows.txt > $(DIST)/$(WINDOWS_DIR)/README-windows.txt
	sed 's/$$/\r/' LICENSE > $(DIST)/$(WINDOWS_DIR)/LICENSE.txt
	cp README.md $(DIST)/$(WINDOWS_DIR)/README.md
	cd $(DIST) && zip -q -r -X $(WINDOWS_DIR).zip $(WINDOWS_DIR)
	@echo "wrote $(DIST)/$(WINDOWS_DIR).zip"

check-dist:
	scripts/setup-debian --dist
	scripts/check-dist $(wildcard $(DIST)/$(LINUX_DIR).tar.gz $(DIST)/$(WINDOWS_DIR).zip)

# The icon: the PNG for the app and the Linux desktop, the ICO and its
# compiled resource for the Windows executable (go build links the .syso
# into windows/amd64 builds only). All three are committed.
icon:
	scripts/setup-debian --dist
	$(GO) run ./assets/icon/gen.go -o assets/icon.png -ico packaging/windows/polypledger.ico
	x86_64-w64-mingw32-windres --include-dir packaging/windows -O coff -i packaging/windows/polypledger.rc -o rsrc_windows_amd64.syso

clean:
	rm -f polypledger
	rm -rf $(DIST)
