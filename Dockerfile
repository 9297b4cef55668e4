FROM python:3.11-slim
ENV UV_PYTHON_DOWNLOADS=never
WORKDIR /app
# WeasyPrint (the reserves report's PDF) needs Pango, HarfBuzz, fontconfig and a font.
RUN apt-get update -qq \
    && DEBIAN_FRONTEND=noninteractive apt-get install -y -qq --no-install-recommends \
       libpango-1.0-0 libpangoft2-1.0-0 libharfbuzz0b libharfbuzz-subset0 libfontconfig1 fonts-dejavu-core \
    && rm -rf /var/lib/apt/lists/*
RUN pip install --no-cache-dir uv==0.13.8
COPY pyproject.toml uv.lock README.md ./
COPY server ./server
RUN uv sync --frozen --no-dev --compile-bytecode && .venv/bin/python -m compileall -q server \
    && .venv/bin/python -m server.engine.warm && ln -s /app/.venv/bin/tankbook /usr/local/bin/tankbook
COPY alembic.ini ./
COPY migrations ./migrations
COPY templates ./templates
COPY static ./static
RUN useradd --system tankbook && chown -R tankbook /app
USER tankbook
EXPOSE 8000
