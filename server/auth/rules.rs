//! Who may do what: the one table of access rules, by HTTP method and path.
//!
//! The first rule that matches a request decides. Reads need a signed-in viewer and
//! changes an interpreter, unless a rule before them says otherwise; so a route added
//! later is never public by accident.

use super::Role;

/// What a request needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Access {
    /// Anyone, signed in or not.
    Public,
    /// A signed-in account with at least this role.
    AtLeast(Role),
}

/// The rule that decided a request, with the action named for the refusal message.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Requirement {
    pub access: Access,
    /// What the request does, e.g. "changing model parameters".
    pub action: &'static str,
}

/// Which methods a rule covers.
#[derive(Debug, Clone, Copy)]
enum Methods {
    /// GET, HEAD and OPTIONS: they change nothing.
    Reads,
    /// Every other method (POST, PUT, PATCH, DELETE …).
    Changes,
    /// Exactly this method.
    Only(&'static str),
    Any,
}

impl Methods {
    fn covers(self, method: &str) -> bool {
        let read = matches!(method, "GET" | "HEAD" | "OPTIONS");
        match self {
            Methods::Reads => read,
            Methods::Changes => !read,
            Methods::Only(m) => m.eq_ignore_ascii_case(method),
            Methods::Any => true,
        }
    }
}

struct Rule {
    methods: Methods,
    /// Path segments separated by `/`; `*` stands for one segment, `**` for any number.
    path: &'static str,
    access: Access,
    action: &'static str,
}

const fn rule(methods: Methods, path: &'static str, access: Access, action: &'static str) -> Rule {
    Rule {
        methods,
        path,
        access,
        action,
    }
}

use Access::{AtLeast, Public};
use Methods::{Any, Changes, Only, Reads};
use Role::{Admin, Interpreter, Viewer};

/// The access rules, first match wins.
const RULES: &[Rule] = &[
    rule(Reads, "/login", Public, "signing in"),
    rule(Only("POST"), "/login", Public, "signing in"),
    rule(
        Reads,
        "/static/**",
        Public,
        "loading the page's style and script",
    ),
    rule(Reads, "/favicon.ico", Public, "loading the tab icon"),
    rule(Any, "/admin/**", AtLeast(Admin), "managing users"),
    rule(Any, "/api/admin/**", AtLeast(Admin), "managing users"),
    rule(Only("DELETE"), "/**", AtLeast(Admin), "deleting"),
    rule(Changes, "/**/delete", AtLeast(Admin), "deleting"),
    rule(Changes, "/logout", AtLeast(Viewer), "signing out"),
    rule(
        Changes,
        "/logout-everywhere",
        AtLeast(Viewer),
        "signing out",
    ),
    rule(
        Changes,
        "/account/password",
        AtLeast(Viewer),
        "changing your own password",
    ),
    rule(
        Changes,
        "/api/account/password",
        AtLeast(Viewer),
        "changing your own password",
    ),
    rule(Changes, "/studies", AtLeast(Admin), "creating a study"),
    rule(Changes, "/api/studies", AtLeast(Admin), "creating a study"),
    rule(
        Changes,
        "/studies/*/parameters",
        AtLeast(Admin),
        "changing model parameters",
    ),
    rule(
        Changes,
        "/api/studies/*/parameters",
        AtLeast(Admin),
        "changing model parameters",
    ),
    rule(
        Changes,
        "/studies/*/thermal",
        AtLeast(Admin),
        "changing the thermal settings",
    ),
    rule(
        Changes,
        "/api/studies/*/thermal",
        AtLeast(Admin),
        "changing the thermal settings",
    ),
    rule(
        Changes,
        "/studies/*/lithologies/**",
        AtLeast(Admin),
        "editing the lithology catalogue",
    ),
    rule(
        Changes,
        "/api/studies/*/lithologies/**",
        AtLeast(Admin),
        "editing the lithology catalogue",
    ),
    rule(Reads, "/**", AtLeast(Viewer), "reading"),
    rule(
        Changes,
        "/**",
        AtLeast(Interpreter),
        "changing data (uploads, picks, comments)",
    ),
];

/// What a request with this method and path (no query) needs.
pub fn required_access(method: &str, path: &str) -> Requirement {
    let segments: Vec<&str> = path.split('/').filter(|s| !s.is_empty()).collect();
    RULES
        .iter()
        .find(|r| r.methods.covers(method) && matches(&pattern(r.path), &segments))
        .map(|r| Requirement {
            access: r.access,
            action: r.action,
        })
        // The last two rules cover every method; this is the safe answer if they ever do not.
        .unwrap_or(Requirement {
            access: AtLeast(Admin),
            action: "this",
        })
}

fn pattern(path: &'static str) -> Vec<&'static str> {
    path.split('/').filter(|s| !s.is_empty()).collect()
}

fn matches(pattern: &[&str], path: &[&str]) -> bool {
    match (pattern.first(), path.first()) {
        (None, None) => true,
        (Some(&"**"), _) => {
            matches(&pattern[1..], path) || (!path.is_empty() && matches(pattern, &path[1..]))
        }
        (Some(&"*"), Some(_)) => matches(&pattern[1..], &path[1..]),
        (Some(p), Some(s)) if p == s => matches(&pattern[1..], &path[1..]),
        _ => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn needs(method: &str, path: &str) -> Access {
        required_access(method, path).access
    }

    #[test]
    fn only_signing_in_and_static_files_are_public() {
        assert_eq!(needs("GET", "/login"), Public);
        assert_eq!(needs("POST", "/login"), Public);
        assert_eq!(needs("GET", "/static/style.css"), Public);
        assert_eq!(needs("GET", "/favicon.ico"), Public);
        assert_eq!(needs("POST", "/static/style.css"), AtLeast(Interpreter));
        assert_eq!(needs("GET", "/"), AtLeast(Viewer));
        assert_eq!(needs("GET", "/loginx"), AtLeast(Viewer));
        assert_eq!(needs("GET", "/api/session"), AtLeast(Viewer));
    }

    #[test]
    fn admin_work_needs_an_admin_whatever_the_method() {
        for (method, path) in [
            ("GET", "/admin/users"),
            ("GET", "/api/admin/users"),
            ("POST", "/admin/users/3/role"),
            ("PUT", "/api/admin/users/3/role"),
            ("POST", "/studies"),
            ("POST", "/api/studies"),
            ("POST", "/studies/1/parameters"),
            ("PUT", "/api/studies/1/parameters"),
            ("POST", "/studies/1/thermal"),
            ("PUT", "/api/studies/1/thermal"),
            ("POST", "/studies/1/lithologies"),
            ("PUT", "/api/studies/1/lithologies"),
            ("POST", "/studies/1/lithologies/4/delete"),
            ("DELETE", "/api/studies/1/wells/2"),
            ("POST", "/studies/1/wells/2/delete"),
        ] {
            assert_eq!(needs(method, path), AtLeast(Admin), "{method} {path}");
        }
    }

    #[test]
    fn other_changes_need_an_interpreter_and_reads_a_viewer() {
        assert_eq!(needs("POST", "/studies/1/upload"), AtLeast(Interpreter));
        assert_eq!(needs("POST", "/api/studies/1/tops"), AtLeast(Interpreter));
        assert_eq!(
            needs("PATCH", "/api/studies/1/wells/2/picks"),
            AtLeast(Interpreter)
        );
        assert_eq!(needs("GET", "/studies/1/catalogue"), AtLeast(Viewer));
        assert_eq!(needs("HEAD", "/studies"), AtLeast(Viewer));
        assert_eq!(needs("POST", "/logout"), AtLeast(Viewer));
        assert_eq!(needs("POST", "/logout-everywhere"), AtLeast(Viewer));
        assert_eq!(needs("POST", "/account/password"), AtLeast(Viewer));
        assert_eq!(needs("POST", "/api/account/password"), AtLeast(Viewer));
        assert_eq!(needs("POST", "/admin/users/3/unlock"), AtLeast(Admin));
    }

    #[test]
    fn the_refusal_names_the_action() {
        assert_eq!(
            required_access("PUT", "/api/studies/9/parameters").action,
            "changing model parameters"
        );
        assert_eq!(
            required_access("POST", "/admin/users").action,
            "managing users"
        );
    }
}
