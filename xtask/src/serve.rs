//! `cargo xtask serve`: build the site and serve it on 127.0.0.1 only.

use std::fs;
use std::path::{Component, Path, PathBuf};

use crate::tools;
use crate::Result;

/// Builds the site into `${CARGO_TARGET_DIR:-target}/xtask/site` and serves it until stopped.
pub fn serve(port: u16) -> Result<()> {
    let dir = tools::target_dir().join("xtask").join("site");
    crate::site::build_site(&dir)?;
    let addr = format!("127.0.0.1:{port}");
    let server = tiny_http::Server::http(&addr).map_err(|e| {
        format!("cannot listen on {addr}: {e}; pick another port with `cargo xtask serve --port N`")
    })?;
    println!(
        "xtask: serving {} at http://{addr}/ (Ctrl-C stops)",
        dir.display()
    );
    // One thread per request: a browser opens several connections at once, and answering them
    // one after another on this thread stalled page loads.
    let dir = std::sync::Arc::new(dir);
    for request in server.incoming_requests() {
        let dir = std::sync::Arc::clone(&dir);
        std::thread::spawn(move || {
            let response = respond(&dir, request.url());
            if let Err(e) = request.respond(response) {
                eprintln!("xtask: a response failed: {e}");
            }
        });
    }
    Ok(())
}

fn header(name: &str, value: &str) -> tiny_http::Header {
    tiny_http::Header::from_bytes(name.as_bytes(), value.as_bytes()).expect("ASCII header")
}

fn respond(dir: &Path, url: &str) -> tiny_http::Response<std::io::Cursor<Vec<u8>>> {
    let path = url.split(['?', '#']).next().unwrap_or("/");
    let Some(file) = resolve(dir, path) else {
        return tiny_http::Response::from_string("not found").with_status_code(404);
    };
    match fs::read(&file) {
        Ok(bytes) => {
            let mime = mime_guess::from_path(&file).first_or_octet_stream();
            tiny_http::Response::from_data(bytes)
                .with_header(header("Content-Type", mime.essence_str()))
                .with_header(header("Cache-Control", "no-cache"))
        }
        Err(_) => tiny_http::Response::from_string("not found").with_status_code(404),
    }
}

/// The file below `dir` for a URL path, refusing anything that would leave `dir`.
fn resolve(dir: &Path, url_path: &str) -> Option<PathBuf> {
    let rel = url_path.trim_start_matches('/');
    let rel = if rel.is_empty() || rel.ends_with('/') {
        format!("{rel}index.html")
    } else {
        rel.to_string()
    };
    let rel = Path::new(&rel);
    if !rel.components().all(|c| matches!(c, Component::Normal(_))) {
        return None;
    }
    let file = dir.join(rel);
    file.is_file().then_some(file)
}
