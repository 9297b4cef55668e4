# Two commands: `make run` (the app with a demo portfolio) and `make test` (the whole suite).
# `make run PORT=8001 HOST=0.0.0.0` serves elsewhere (default: TANKBOOK_HOST/TANKBOOK_PORT, 127.0.0.1:8000).
PYTHON ?= $(shell command -v python3.11 || command -v python3)
UV := .tools/bin/uv
export UV_PYTHON_DOWNLOADS := never

.PHONY: run test setup lint clean

$(UV):
	$(PYTHON) -m venv .tools
	.tools/bin/pip install --quiet uv==0.13.8

.venv/.synced: pyproject.toml uv.lock | $(UV)
	$(UV) sync --frozen --compile-bytecode --python $(PYTHON)
	.venv/bin/python -m compileall -q server
	.venv/bin/python -m server.engine.warm
	touch $@

setup: .venv/.synced

run: setup
	.venv/bin/tankbook migrate
	.venv/bin/tankbook demo --if-empty
	.venv/bin/tankbook serve --first-admin$(if $(HOST), --host $(HOST))$(if $(PORT), --port $(PORT))

test: setup
	.venv/bin/ruff check server tests migrations
	.venv/bin/pytest

lint: setup
	.venv/bin/ruff check server tests

clean:
	rm -rf .venv .tools var
