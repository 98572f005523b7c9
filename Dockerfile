# syntax=docker/dockerfile:1
#
# statecast container image: build with `docker build -t statecast:0.1.0 .`
#
# ADVISORY ONLY. The estimates are advisory and are not a safety function: do not use them as
# the only input to the control of water systems or vehicles; defer to local codes and
# licensed practice.
#
# Run (the HTTP port listens on all interfaces of the container, so a token is required):
#   docker run --rm --stop-timeout 20 -p 127.0.0.1:8470:8470 \
#     -e STATECAST_API_TOKEN="$(openssl rand -hex 24)" \
#     -v "$PWD/statecast.yaml:/etc/statecast/statecast.yaml:ro" -v statecast-state:/var/lib/statecast \
#     statecast:0.1.0
# Without a mounted configuration the image runs config/tank-farm.yaml (embedded broker and
# simulator inside the container: a self-contained demo).
#
# test/deploy/dockerfile-recipe.test.ts performs this file's COPY and npm RUN steps outside
# Docker and boots the result, so keep every RUN a plain command line that test can read.

ARG NODE_IMAGE=node:20-bookworm-slim

# ---- build: all dependencies, TypeScript compiled to dist/ (the postbuild script copies
# the dashboard's static files to dist/dashboard/, where the compiled app looks for them).
FROM ${NODE_IMAGE} AS build
WORKDIR /app
COPY package.json package-lock.json ./
RUN --mount=type=cache,target=/root/.npm npm ci
COPY tsconfig.json tsconfig.build.json ./
COPY scripts ./scripts
COPY src ./src
RUN npm run build

# ---- runtime: production dependencies only, the compiled daemon, its launcher and examples.
FROM ${NODE_IMAGE} AS runtime
ENV NODE_ENV=production
WORKDIR /app
COPY package.json package-lock.json ./
RUN --mount=type=cache,target=/root/.npm npm ci --omit=dev
COPY --from=build /app/dist ./dist
COPY bin ./bin
COPY config ./config
COPY config/tank-farm.yaml /etc/statecast/statecast.yaml

# A fixed non-root user (uid/gid 10001, the same numbers the Kubernetes manifest runs as) that
# owns only the state directory; the code and the configuration stay read-only to it.
RUN groupadd --system --gid 10001 statecast && useradd --system --uid 10001 --gid statecast --home-dir /var/lib/statecast --no-create-home --shell /usr/sbin/nologin statecast && mkdir -p /var/lib/statecast && chown statecast:statecast /var/lib/statecast

# Environment overrides (src/config/env-overrides.ts) win over the configuration file:
# - STATECAST_STATE_DIR puts checkpoints on the state volume whatever the file says.
# - STATECAST_HTTP_PORT pins the port so EXPOSE and the HEALTHCHECK below stay right.
# - STATECAST_HTTP_HOST=0.0.0.0 makes the port reachable through Docker's port mapping. The
#   daemon refuses to start on a non-loopback address without auth.token (exit code 2,
#   CONFIG_INVALID) unless the file sets http.allowInsecureBind: true, so this image needs
#   STATECAST_API_TOKEN (at least 16 characters) at run time. Pass it with -e or an env file,
#   never bake it into an image.
ENV STATECAST_STATE_DIR=/var/lib/statecast \
    STATECAST_HTTP_PORT=8470 \
    STATECAST_HTTP_HOST=0.0.0.0

USER statecast
EXPOSE 8470
VOLUME ["/etc/statecast", "/var/lib/statecast"]

# Liveness through Node's own fetch (the slim image has no curl). /healthz needs no token.
HEALTHCHECK --interval=30s --timeout=5s --start-period=20s --retries=3 \
  CMD ["node", "-e", "fetch('http://127.0.0.1:' + (process.env.STATECAST_HTTP_PORT || '8470') + '/healthz').then((r) => process.exit(r.status === 200 ? 0 : 1), () => process.exit(1))"]

# No init process: node runs as PID 1. The daemon installs its own SIGTERM, SIGINT and SIGHUP
# handlers (PID 1 gets no default signal actions, so unhandled signals would be ignored, but
# none of these is unhandled), and it starts no child processes, so there are no zombies to
# reap. SIGTERM stops it gracefully within its 10 s deadline and writes a final checkpoint;
# Docker's default stop timeout is also 10 s, hence --stop-timeout 20 above (Compose:
# stop_grace_period). `docker run --init` adds an init anyway if your platform wants one.
STOPSIGNAL SIGTERM
ENTRYPOINT ["node", "/app/bin/statecast.js"]
CMD ["run", "--config", "/etc/statecast/statecast.yaml"]
