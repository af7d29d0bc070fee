//! glycoweek: a self-hosted planning service that turns a squad's planned
//! training week into carbohydrate periodization targets.
//!
//! Architecture in one breath: [`engine`] is the pure physiology and
//! planning computation; [`store`] is the only code that speaks SQL;
//! [`http`] serves JSON with one module per resource; [`domain`] holds the
//! shapes the API accepts and returns; [`board`] is the built-in web board
//! for dietitians, a layer beside the API that reads and writes through it.
//! [`build_app`] assembles the router
//! and [`serve`] runs it, so the binary and the tests start the service the
//! same way.

#![forbid(unsafe_code)]

pub mod bench;
pub mod board;
pub mod config;
pub mod demo;
pub mod domain;
pub mod engine;
pub mod error;
pub mod http;
pub mod plan_memo;
pub mod planner;
pub mod store;

use std::sync::Arc;
use std::time::Duration;

use axum::Router;
use axum::extract::DefaultBodyLimit;
use axum::http::{HeaderName, HeaderValue, Method, StatusCode, header};
use tokio::net::TcpListener;
use tower_http::catch_panic::CatchPanicLayer;
use tower_http::compression::CompressionLayer;
use tower_http::cors::{AllowOrigin, CorsLayer};
use tower_http::limit::RequestBodyLimitLayer;
use tower_http::request_id::{MakeRequestUuid, PropagateRequestIdLayer, SetRequestIdLayer};
use tower_http::sensitive_headers::SetSensitiveRequestHeadersLayer;
use tower_http::set_header::SetResponseHeaderLayer;
use tower_http::timeout::TimeoutLayer;
use tower_http::trace::TraceLayer;
use utoipa_swagger_ui::SwaggerUi;

pub use config::Config;
use store::Db;

/// Shared by every handler.
#[derive(Clone)]
pub struct AppState {
    pub db: Db,
    pub config: Arc<Config>,
    pub plan_cache: Arc<http::plan_cache::PlanCache>,
    /// Week plans per athlete, keyed by the athlete's engine input.
    pub plan_memo: Arc<plan_memo::PlanMemo>,
    /// Plan computations in flight, one per ETag.
    pub plan_flights: Arc<http::single_flight::Flights>,
}

impl AppState {
    pub fn new(db: Db, config: Config) -> Self {
        let cache_bytes = config.plan_cache_mib.saturating_mul(1024 * 1024);
        let memo_bytes = config.plan_memo_mib.saturating_mul(1024 * 1024);
        Self {
            db,
            config: Arc::new(config),
            plan_cache: Arc::new(http::plan_cache::PlanCache::new(cache_bytes)),
            plan_memo: Arc::new(plan_memo::PlanMemo::new(memo_bytes)),
            plan_flights: Default::default(),
        }
    }
}

const REQUEST_ID: HeaderName = HeaderName::from_static("x-request-id");

/// The OpenAPI document of this build (also served at `/openapi.json`).
pub fn openapi() -> utoipa::openapi::OpenApi {
    let (_, doc) = http::api_router().split_for_parts();
    http::openapi::finish(doc)
}

/// Builds the whole application: API routes, documentation and middleware.
pub fn build_app(state: AppState) -> Router {
    let config = state.config.clone();
    let (api, doc) = http::api_router().split_for_parts();
    let doc = http::openapi::finish(doc);
    let docs = SwaggerUi::new("/docs")
        .url("/openapi.json", doc)
        .config(utoipa_swagger_ui::Config::default().validator_url("none"));

    let cors = if config.cors_origins.is_empty() {
        None
    } else {
        let origins: Vec<HeaderValue> = config
            .cors_origins
            .iter()
            .filter_map(|o| HeaderValue::from_str(o).ok())
            .collect();
        Some(
            CorsLayer::new()
                .allow_origin(AllowOrigin::list(origins))
                .allow_methods([
                    Method::GET,
                    Method::POST,
                    Method::PUT,
                    Method::PATCH,
                    Method::DELETE,
                ])
                .allow_headers([
                    header::AUTHORIZATION,
                    header::CONTENT_TYPE,
                    header::IF_MATCH,
                    header::IF_NONE_MATCH,
                ])
                .expose_headers([header::ETAG, header::LOCATION, REQUEST_ID]),
        )
    };

    let board = board::router(state.clone());
    let mut api = api;
    if config.ceiling_endpoint {
        api = api.route("/v1/ceiling", axum::routing::get(http::ceiling));
    }
    let router = api.with_state(state).merge(docs);
    let router = match cors {
        Some(cors) => router.layer(cors),
        None => router,
    };
    let router = if config.rate_limit_per_minute > 0 {
        let limiter = Arc::new(http::middleware::RateLimiter::new(
            config.rate_limit_per_minute,
        ));
        router.layer(axum::middleware::from_fn_with_state(
            limiter,
            http::middleware::rate_limit,
        ))
    } else {
        router
    };
    let api = router
        .layer(DefaultBodyLimit::disable())
        .layer(RequestBodyLimitLayer::new(config.body_limit_bytes))
        .layer(TimeoutLayer::with_status_code(
            StatusCode::REQUEST_TIMEOUT,
            Duration::from_secs(config.request_timeout_secs),
        ))
        .layer(CatchPanicLayer::new())
        .layer(axum::middleware::from_fn(http::middleware::problems));
    // The board answers in HTML with its own limits and error pages, so it
    // sits outside the problem+json rewriter; every other path, unknown
    // routes included, goes to the API stack as before.
    board
        .fallback_service(api)
        // Security headers outside every layer that can answer by itself
        // (body limit, timeout, panics), so those answers carry them too.
        .layer(SetResponseHeaderLayer::if_not_present(
            header::X_CONTENT_TYPE_OPTIONS,
            HeaderValue::from_static("nosniff"),
        ))
        .layer(SetResponseHeaderLayer::if_not_present(
            header::X_FRAME_OPTIONS,
            HeaderValue::from_static("DENY"),
        ))
        .layer(SetResponseHeaderLayer::if_not_present(
            header::REFERRER_POLICY,
            HeaderValue::from_static("no-referrer"),
        ))
        .layer(SetResponseHeaderLayer::if_not_present(
            header::CACHE_CONTROL,
            HeaderValue::from_static("no-store"),
        ))
        // Outside the problem rewriter, which must read bodies uncompressed.
        .layer(CompressionLayer::new().gzip(true))
        .layer(
            TraceLayer::new_for_http().make_span_with(|req: &axum::http::Request<_>| {
                let request_id = req
                    .headers()
                    .get(REQUEST_ID)
                    .and_then(|v| v.to_str().ok())
                    .unwrap_or("-");
                let route = req
                    .extensions()
                    .get::<axum::extract::MatchedPath>()
                    .map(|p| p.as_str().to_owned())
                    .unwrap_or_default();
                // The URI is left out: paths carry ids, never body data or tokens.
                tracing::info_span!("request", method = %req.method(), route, request_id)
            }),
        )
        .layer(SetSensitiveRequestHeadersLayer::new([
            header::AUTHORIZATION,
        ]))
        .layer(PropagateRequestIdLayer::new(REQUEST_ID))
        .layer(SetRequestIdLayer::new(REQUEST_ID, MakeRequestUuid))
}

/// Serves the app on `listener` until `shutdown` resolves, then lets
/// in-flight requests finish.
pub async fn serve(
    listener: TcpListener,
    state: AppState,
    shutdown: impl std::future::Future<Output = ()> + Send + 'static,
) -> std::io::Result<()> {
    let app = build_app(state);
    axum::serve(
        listener,
        app.into_make_service_with_connect_info::<std::net::SocketAddr>(),
    )
    .with_graceful_shutdown(shutdown)
    .await
}

/// Resolves on SIGINT or SIGTERM.
pub async fn shutdown_signal() {
    let ctrl_c = async {
        let _ = tokio::signal::ctrl_c().await;
    };
    #[cfg(unix)]
    let terminate = async {
        match tokio::signal::unix::signal(tokio::signal::unix::SignalKind::terminate()) {
            Ok(mut s) => {
                s.recv().await;
            }
            Err(_) => std::future::pending::<()>().await,
        }
    };
    #[cfg(not(unix))]
    let terminate = std::future::pending::<()>();
    tokio::select! {
        _ = ctrl_c => {},
        _ = terminate => {},
    }
    tracing::info!("shutdown requested; finishing in-flight requests");
}
