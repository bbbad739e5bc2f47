// Embedded migrations (sqlx::migrate!) and templates are read at compile time.
fn main() {
    println!("cargo:rerun-if-changed=migrations");
    println!("cargo:rerun-if-changed=templates");
}
