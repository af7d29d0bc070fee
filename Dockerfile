# syntax=docker/dockerfile:1
# Build: a release binary from the committed offline query data (.sqlx/).
FROM rust:1.95-bookworm AS build
WORKDIR /src
ENV SQLX_OFFLINE=true CARGO_TERM_COLOR=never
COPY Cargo.toml Cargo.lock build.rs ./
COPY .sqlx ./.sqlx
COPY migrations ./migrations
COPY src ./src
RUN cargo build --release --locked --bin glycoweek

# Run: a small image, an unprivileged user, the database on a volume.
FROM debian:bookworm-slim
RUN useradd --system --uid 10001 --home-dir /data --shell /usr/sbin/nologin glycoweek \
    && mkdir -p /data && chown glycoweek /data
COPY --from=build /src/target/release/glycoweek /usr/local/bin/glycoweek
USER glycoweek
WORKDIR /data
# MIMALLOC_PURGE_DELAY=0: the allocator returns freed memory at once
# (10-15 MiB lower peak RSS; single runs served the mixed load somewhat
# slower: README, Performance).
ENV GLYCOWEEK_LISTEN=0.0.0.0:8080 \
    GLYCOWEEK_DATABASE=/data/glycoweek.db \
    GLYCOWEEK_LOG_FORMAT=json \
    MIMALLOC_PURGE_DELAY=0
EXPOSE 8080
VOLUME ["/data"]
HEALTHCHECK --interval=30s --timeout=5s --start-period=10s --retries=3 \
    CMD ["glycoweek", "probe", "--url", "http://127.0.0.1:8080/health"]
ENTRYPOINT ["glycoweek"]
CMD ["serve"]
