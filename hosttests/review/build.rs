//! Reads the version of the photon-ledger library this tool is built with (the workspace's
//! root package, `../../Cargo.toml`) into `PHOTON_LEDGER_VERSION`, so every report names it.

fn main() {
    let manifest = std::path::Path::new(&std::env::var("CARGO_MANIFEST_DIR").unwrap_or_default())
        .join("../../Cargo.toml");
    println!("cargo:rerun-if-changed={}", manifest.display());
    let text = std::fs::read_to_string(&manifest)
        .unwrap_or_else(|e| panic!("{}: {e} (the photon-ledger manifest)", manifest.display()));
    let value: toml::Table = text
        .parse()
        .unwrap_or_else(|e| panic!("{}: {e}", manifest.display()));
    let package = value.get("package").and_then(|p| p.as_table());
    let name = package.and_then(|p| p.get("name")).and_then(|n| n.as_str());
    let version = package
        .and_then(|p| p.get("version"))
        .and_then(|v| v.as_str());
    match (name, version) {
        (Some("photon-ledger"), Some(v)) => println!("cargo:rustc-env=PHOTON_LEDGER_VERSION={v}"),
        _ => panic!(
            "{}: not the photon-ledger package manifest (name and version expected)",
            manifest.display()
        ),
    }
}
