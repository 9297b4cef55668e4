FROM python:3.11-slim
ENV UV_PYTHON_DOWNLOADS=never PYTHONDONTWRITEBYTECODE=1
WORKDIR /app
RUN pip install --no-cache-dir uv==0.13.8
COPY pyproject.toml uv.lock README.md ./
COPY server ./server
RUN uv sync --frozen --no-dev && ln -s /app/.venv/bin/tankbook /usr/local/bin/tankbook
COPY alembic.ini ./
COPY migrations ./migrations
COPY templates ./templates
COPY static ./static
RUN useradd --system tankbook && chown -R tankbook /app
USER tankbook
EXPOSE 8000
