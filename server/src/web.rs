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
