# Ramify: set-up, run, test. Works on a fresh Debian/Ubuntu machine with Go installed:
# the set-up step installs the C compiler and the GL/X11 headers Fyne needs.
SHELL := /bin/bash
export LANG ?= en_US.UTF-8
GO ?= go
SUDO := $(shell [ "$$(id -u)" = 0 ] || echo sudo)
APT_PACKAGES := gcc pkg-config libgl1-mesa-dev libx11-dev libxcursor-dev libxrandr-dev \
	libxinerama-dev libxi-dev libxxf86vm-dev xvfb xauth x11-utils poppler-utils imagemagick
FUZZTIME ?= 10s
DEMO ?= assets/demos/chiller-cover.ramify.json

.PHONY: setup build run test vet unit fuzz smoke bench clean

# setup installs only what is missing, so repeated runs are quick.
setup:
	@missing=""; for p in $(APT_PACKAGES); do dpkg -s $$p >/dev/null 2>&1 || missing="$$missing $$p"; done; \
	if [ -n "$$missing" ]; then \
		echo "installing:$$missing"; \
		$(SUDO) apt-get update -qq && DEBIAN_FRONTEND=noninteractive $(SUDO) apt-get install -y -qq $$missing >/dev/null; \
	fi
	@command -v $(GO) >/dev/null || { echo "Go is needed: https://go.dev/doc/install"; exit 1; }

build: setup
	$(GO) build -o ramify ./cmd/ramify

run: build
	./ramify $(DEMO)

vet: setup
	$(GO) vet ./...

unit: setup
	$(GO) test ./...

# Each fuzz target runs briefly in CI; longer runs: make fuzz FUZZTIME=5m
fuzz: setup
	$(GO) test ./engine -run '^$$' -fuzz '^FuzzLoad$$' -fuzztime $(FUZZTIME)
	$(GO) test ./engine -run '^$$' -fuzz '^FuzzFormula$$' -fuzztime $(FUZZTIME)

smoke: build
	bash .ci/smoke.sh ./ramify $(DEMO)

# The packaging test runs only where the Fyne packaging tool is installed
# (make fyne-tool); elsewhere it is skipped with a message.
test: vet unit fuzz smoke package-test

bench: setup
	$(GO) test ./... -run '^$$' -bench . -benchmem

clean:
	rm -rf ramify dist

include .ci/package.mk
