# Packaging targets, included by the top-level Makefile (`include .ci/package.mk`);
# also usable alone: make -f .ci/package.mk package
#
#   make package          dist/Ramify.tar.xz: binary, icon and desktop entry (Linux)
#   make package-windows  dist/Ramify.exe with the icon and version inside; on Windows
#                         (MSYS2 with mingw-w64 gcc) or on Linux with the mingw-w64 cross gcc
#   make package-darwin   dist/Ramify.app; on a Mac with the Xcode command line tools
#   make package-test     the archive test; skipped with a message without the Fyne tool
#
# The version and build number come from FyneApp.toml only.

GO ?= go
FYNE_TOOLS_VERSION ?= v1.7.4
GOBIN_DIR ?= $(or $(shell $(GO) env GOBIN),$(shell $(GO) env GOPATH)/bin)
FYNE ?= $(GOBIN_DIR)/fyne
DIST ?= dist
DIST_DIR = $(abspath $(DIST))
PACKAGE_ARCHIVE = $(DIST_DIR)/Ramify.tar.xz

.PHONY: package package-windows package-darwin fyne-tool package-test

# Installs the pinned Fyne packaging tool unless that version is already there.
fyne-tool:
	@if ! "$(FYNE)" version 2>/dev/null | grep -q 'cli version: $(FYNE_TOOLS_VERSION)$$'; then \
		echo "installing fyne.io/tools/cmd/fyne@$(FYNE_TOOLS_VERSION) into $(GOBIN_DIR)"; \
		GOBIN="$(GOBIN_DIR)" $(GO) install fyne.io/tools/cmd/fyne@$(FYNE_TOOLS_VERSION); \
	fi

# The binary is built here (release mode, symbols stripped) and handed to
# `fyne package`, which reads FyneApp.toml at the top level for the name, ID,
# icon and desktop entry. `fyne package` also adds one to the build number in
# FyneApp.toml after every run; we keep the file as committed and raise the
# build number by hand for a release.
package: fyne-tool
	@mkdir -p "$(DIST_DIR)"
	@rm -f "$(PACKAGE_ARCHIVE)"
	CGO_ENABLED=1 $(GO) build -tags release -trimpath -ldflags "-s -w" -o "$(DIST_DIR)/ramify" ./cmd/ramify
	@cp FyneApp.toml "$(DIST_DIR)/FyneApp.toml.committed"
	cd "$(DIST_DIR)" && "$(FYNE)" package --os linux --release \
		--source-dir "$(CURDIR)" --executable "$(DIST_DIR)/ramify"; \
	status=$$?; \
	cp "$(DIST_DIR)/FyneApp.toml.committed" "$(CURDIR)/FyneApp.toml"; \
	rm -f "$(DIST_DIR)/FyneApp.toml.committed" "$(DIST_DIR)/ramify"; \
	exit $$status
	@echo "built $(PACKAGE_ARCHIVE):"
	@tar -tf "$(PACKAGE_ARCHIVE)"

# macOS: the same steps as Linux; cgo needs Apple's toolchain, so run it on a Mac.
package-darwin: fyne-tool
	@mkdir -p "$(DIST_DIR)"
	@rm -rf "$(DIST_DIR)/Ramify.app"
	CGO_ENABLED=1 $(GO) build -tags release -trimpath -ldflags "-s -w" -o "$(DIST_DIR)/ramify" ./cmd/ramify
	@cp FyneApp.toml "$(DIST_DIR)/FyneApp.toml.committed"
	cd "$(DIST_DIR)" && "$(FYNE)" package --os darwin --release \
		--source-dir "$(CURDIR)" --executable "$(DIST_DIR)/ramify"; \
	status=$$?; \
	cp "$(DIST_DIR)/FyneApp.toml.committed" "$(CURDIR)/FyneApp.toml"; \
	rm -f "$(DIST_DIR)/FyneApp.toml.committed" "$(DIST_DIR)/ramify"; \
	exit $$status

# Windows: `fyne package` builds the .exe itself, with the icon and version as
# Windows resources, from the main package's folder; it gets a copy of
# FyneApp.toml there for the duration (icon path adjusted), removed afterwards.
WINDOWS_CC ?= $(if $(filter Windows_NT,$(OS)),,x86_64-w64-mingw32-gcc)
package-windows: fyne-tool
	@mkdir -p "$(DIST_DIR)"
	@rm -f "$(DIST_DIR)/Ramify.exe"
	sed 's|^\( *Icon *= *"\)assets/|\1../../assets/|' FyneApp.toml > cmd/ramify/FyneApp.toml
	cd cmd/ramify && GOOS=windows GOARCH=amd64 CGO_ENABLED=1 $(if $(WINDOWS_CC),CC=$(WINDOWS_CC)) \
		"$(FYNE)" package --os windows --release --source-dir "$(CURDIR)/cmd/ramify"; \
	status=$$?; \
	rm -f "$(CURDIR)/cmd/ramify/FyneApp.toml" "$(CURDIR)/cmd/ramify/fyne.syso"; \
	if [ $$status = 0 ]; then mv "$(CURDIR)/cmd/ramify/Ramify.exe" "$(DIST_DIR)/Ramify.exe"; fi; \
	exit $$status
	@ls -l "$(DIST_DIR)/Ramify.exe"

# Runs `make package` and lists the archive; skipped (with a message) when the
# Fyne tool is not installed. Kept behind a build tag so `go test ./...` never builds it.
package-test:
	$(GO) test -tags packaging -run '^TestPackageArchive$$' -count=1 -timeout 30m -v ./cmd/ramify
