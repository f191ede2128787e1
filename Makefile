# phasebound — build, test, regenerate.
GO      ?= go
TOOLS   := $(CURDIR)/.tools
BUF_VERSION             := v1.75.0
PROTOC_GEN_GO_VERSION   := v1.36.12
PROTOC_GEN_GRPC_VERSION := v1.6.0

.PHONY: build test unit fuzz proto proto-check demo tools bench clients

build:
	$(GO) build -o bin/phasebound ./cmd/phasebound

tools: $(TOOLS)/buf $(TOOLS)/protoc-gen-go $(TOOLS)/protoc-gen-go-grpc

$(TOOLS)/buf:
	GOBIN=$(TOOLS) $(GO) install github.com/bufbuild/buf/cmd/buf@$(BUF_VERSION)
$(TOOLS)/protoc-gen-go:
	GOBIN=$(TOOLS) $(GO) install google.golang.org/protobuf/cmd/protoc-gen-go@$(PROTOC_GEN_GO_VERSION)
$(TOOLS)/protoc-gen-go-grpc:
	GOBIN=$(TOOLS) $(GO) install google.golang.org/grpc/cmd/protoc-gen-go-grpc@$(PROTOC_GEN_GRPC_VERSION)

# proto regenerates the checked-in Go code from proto/ (pinned tool versions).
proto: tools
	$(TOOLS)/buf lint
	$(TOOLS)/buf generate

# proto-check fails when regeneration would change the tree.
proto-check: proto
	git diff --exit-code -- proto plugins/sdk/internal/pluginpb

# test runs every test: vet, unit and end-to-end tests with the race
# detector, then each fuzz target briefly.
test: build
	$(GO) vet ./...
	$(GO) test -race -count=1 -timeout 25m ./...
	scripts/fuzz.sh 4
	$(MAKE) clients

# demo builds, starts a server on loopback with the embedded catalog, runs
# the demo scenario against it, prints the report, and stops the server.
demo: build
	scripts/demo.sh

bench: build
	bin/phasebound bench

# clients builds the C ABI library (clients/capi) and the C, C++, Fortran
# and Python examples, and runs them against $$PHASEBOUND_SERVER, or against
# a server it starts on loopback and stops.
clients: build
	GO=$(GO) scripts/clients.sh
