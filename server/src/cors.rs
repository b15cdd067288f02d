//! Cross-origin access for dashboards on other origins, from the configured origin list.

use axum::http::{HeaderName, HeaderValue, Method, header};
use tower_http::cors::{AllowOrigin, CorsLayer};

/// The CORS layer for `origins` (`*` allows any origin); `None` when the list is empty.
pub fn layer(origins: &[String]) -> Option<CorsLayer> {
    if origins.is_empty() {
        return None;
    }
    let allow = if origins.iter().any(|o| o == "*") {
        AllowOrigin::any()
    } else {
        AllowOrigin::list(origins.iter().filter_map(|o| HeaderValue::from_str(o).ok()))
    };
    Some(
        CorsLayer::new()
            .allow_origin(allow)
            .allow_methods([
                Method::GET,
                Method::HEAD,
                Method::PUT,
                Method::POST,
                Method::OPTIONS,
            ])
            .allow_headers([
                header::AUTHORIZATION,
                header::CONTENT_TYPE,
                header::IF_NONE_MATCH,
                header::ACCEPT,
            ])
            .expose_headers([header::ETAG, HeaderName::from_static("content-type")])
            .max_age(std::time::Duration::from_secs(3600)),
    )
}
