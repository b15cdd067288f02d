//! The planner's web page: the files under `static/`, compiled into the binary so the page
//! works offline and does not depend on the working directory.
//!
//! Every answer carries a Content-Security-Policy that allows only this server as a source,
//! so the page cannot load anything from another host.

use axum::Router;
use axum::http::header;
use axum::response::IntoResponse;
use axum::routing::get;

/// The Content-Security-Policy of every page file: this origin only, no inline script.
pub const CONTENT_SECURITY_POLICY: &str = "default-src 'self'; script-src 'self'; \
style-src 'self'; img-src 'self' data: blob:; connect-src 'self' blob:; object-src 'none'; \
base-uri 'none'; form-action 'none'; frame-ancestors 'none'";

/// One embedded file: its URL path, content type and bytes.
struct Asset {
    path: &'static str,
    content_type: &'static str,
    bytes: &'static [u8],
}

const ASSETS: &[Asset] = &[
    Asset {
        path: "/",
        content_type: "text/html; charset=utf-8",
        bytes: include_bytes!("../../static/index.html"),
    },
    Asset {
        path: "/static/app.css",
        content_type: "text/css; charset=utf-8",
        bytes: include_bytes!("../../static/app.css"),
    },
    Asset {
        path: "/static/app.js",
        content_type: "text/javascript; charset=utf-8",
        bytes: include_bytes!("../../static/app.js"),
    },
    Asset {
        path: "/static/calendar.js",
        content_type: "text/javascript; charset=utf-8",
        bytes: include_bytes!("../../static/calendar.js"),
    },
    Asset {
        path: "/static/charts.js",
        content_type: "text/javascript; charset=utf-8",
        bytes: include_bytes!("../../static/charts.js"),
    },
    Asset {
        path: "/static/favicon.svg",
        content_type: "image/svg+xml",
        bytes: include_bytes!("../../static/favicon.svg"),
    },
    Asset {
        path: "/static/vendor/uplot-1.6.32/uPlot.iife.min.js",
        content_type: "text/javascript; charset=utf-8",
        bytes: include_bytes!("../../static/vendor/uplot-1.6.32/uPlot.iife.min.js"),
    },
    Asset {
        path: "/static/vendor/uplot-1.6.32/uPlot.min.css",
        content_type: "text/css; charset=utf-8",
        bytes: include_bytes!("../../static/vendor/uplot-1.6.32/uPlot.min.css"),
    },
    Asset {
        path: "/static/vendor/uplot-1.6.32/LICENSE",
        content_type: "text/plain; charset=utf-8",
        bytes: include_bytes!("../../static/vendor/uplot-1.6.32/LICENSE"),
    },
];

/// Routes serving the page at `/` and its files under `/static/`.
pub fn router<S: Clone + Send + Sync + 'static>() -> Router<S> {
    ASSETS.iter().fold(Router::new(), |router, asset| {
        let (content_type, bytes) = (asset.content_type, asset.bytes);
        router.route(
            asset.path,
            get(move || async move {
                (
                    [
                        (header::CONTENT_TYPE, content_type),
                        (header::CONTENT_SECURITY_POLICY, CONTENT_SECURITY_POLICY),
                        (header::X_CONTENT_TYPE_OPTIONS, "nosniff"),
                        (header::CACHE_CONTROL, "no-cache"),
                    ],
                    bytes,
                )
                    .into_response()
            }),
        )
    })
}

#[cfg(test)]
mod tests {
    use axum::body::{Body, to_bytes};
    use axum::http::{Request, StatusCode};
    use tower::ServiceExt;

    use super::*;

    async fn get(path: &str) -> (StatusCode, axum::http::HeaderMap, Vec<u8>) {
        let app: Router = router();
        let response = app
            .oneshot(Request::get(path).body(Body::empty()).unwrap())
            .await
            .unwrap();
        let status = response.status();
        let headers = response.headers().clone();
        let body = to_bytes(response.into_body(), usize::MAX).await.unwrap();
        (status, headers, body.to_vec())
    }

    #[tokio::test]
    async fn every_page_file_is_served_with_its_type_and_a_self_only_policy() {
        for asset in ASSETS {
            let (status, headers, body) = get(asset.path).await;
            assert_eq!(status, StatusCode::OK, "{}", asset.path);
            assert_eq!(headers[header::CONTENT_TYPE], asset.content_type);
            assert_eq!(
                headers[header::CONTENT_SECURITY_POLICY],
                CONTENT_SECURITY_POLICY
            );
            assert!(!body.is_empty(), "{} is empty", asset.path);
        }
    }

    #[tokio::test]
    async fn the_page_names_only_files_this_router_serves() {
        let (_, _, body) = get("/").await;
        let html = String::from_utf8(body).unwrap();
        for part in html
            .split(['"', '\''])
            .filter(|p| p.starts_with("/static/"))
        {
            assert!(
                ASSETS.iter().any(|a| a.path == part),
                "index.html names {part}, which is not served"
            );
        }
        assert!(!html.contains("http://") && !html.contains("https://"));
    }
}
