//! Who may use the console. It controls a heater, so: requests must name this console as their
//! host (a page elsewhere cannot reach it through a name that points here), a request that
//! changes anything must come from the console's own page (its Origin) and never by GET, and on
//! a bench network (`--listen`) every request must carry the access token.

/// Why a request was refused.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum Denied {
    /// The Host header names another server.
    #[error("refused: the request is addressed to `{0}`, not to this console")]
    Host(String),
    /// A state change from another page.
    #[error("refused: a change requested from another origin (`{0}`)")]
    Origin(String),
    /// No or a wrong token.
    #[error("refused: this console needs its access token on every request")]
    Token,
    /// A change by GET.
    #[error("refused: changes are made by POST from the console's page")]
    Method,
}

/// The console's access rules.
#[derive(Debug, Clone)]
pub struct Access {
    hosts: Vec<String>,
    token: Option<String>,
}

/// The parts of a request the rules read.
#[derive(Debug, Clone, Copy, Default)]
pub struct Asked<'a> {
    /// The method: GET, POST…
    pub method: &'a str,
    /// The Host header.
    pub host: Option<&'a str>,
    /// The Origin header.
    pub origin: Option<&'a str>,
    /// The token header.
    pub token_header: Option<&'a str>,
    /// The `token` query parameter.
    pub token_query: Option<&'a str>,
    /// The route changes state.
    pub changes: bool,
}

/// Equal without stopping at the first difference (a token compared by time leaks it).
fn same(a: &str, b: &str) -> bool {
    a.len() == b.len() && a.bytes().zip(b.bytes()).fold(0u8, |d, (x, y)| d | (x ^ y)) == 0
}

impl Access {
    /// Rules for a console listening on `addr`, needing `token` when given.
    pub fn new(addr: std::net::SocketAddr, token: Option<String>) -> Access {
        let port = addr.port();
        let mut hosts = vec![format!("{addr}")];
        if addr.ip().is_loopback() {
            hosts.extend([
                format!("localhost:{port}"),
                format!("127.0.0.1:{port}"),
                format!("[::1]:{port}"),
            ]);
        }
        Access { hosts, token }
    }

    /// The token, when one is needed.
    pub fn token(&self) -> Option<&str> {
        self.token.as_deref()
    }

    /// Allowed, or why not.
    pub fn check(&self, r: &Asked) -> Result<(), Denied> {
        let host = r.host.unwrap_or_default();
        if !self.hosts.iter().any(|h| h.eq_ignore_ascii_case(host)) {
            return Err(Denied::Host(host.into()));
        }
        if let Some(t) = &self.token {
            let given = r.token_header.or(r.token_query).unwrap_or_default();
            if !same(given, t) {
                return Err(Denied::Token);
            }
        }
        if r.changes {
            if r.method != "POST" {
                return Err(Denied::Method);
            }
            let origin = r.origin.unwrap_or("(none)");
            if origin != format!("http://{host}") {
                return Err(Denied::Origin(origin.into()));
            }
        }
        Ok(())
    }
}

/// A fresh access token: 128 bits from the system's random source, hex.
pub fn new_token() -> std::io::Result<String> {
    use std::io::Read;
    let mut b = [0u8; 16];
    std::fs::File::open("/dev/urandom")?.read_exact(&mut b)?;
    Ok(b.iter().map(|x| format!("{x:02x}")).collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn asked<'a>(method: &'a str, host: &'a str, origin: Option<&'a str>) -> Asked<'a> {
        Asked {
            method,
            host: Some(host),
            origin,
            changes: method == "POST",
            ..Default::default()
        }
    }

    #[test]
    fn only_the_consoles_own_page_changes_anything_and_a_token_is_always_asked_for() {
        let a = Access::new("127.0.0.1:8123".parse().unwrap(), None);
        assert_eq!(a.check(&asked("GET", "127.0.0.1:8123", None)), Ok(()));
        assert_eq!(a.check(&asked("GET", "localhost:8123", None)), Ok(()));
        // a name that points here (DNS rebinding) is not this console
        assert!(matches!(
            a.check(&asked("GET", "evil.example:8123", None)),
            Err(Denied::Host(_))
        ));
        let own = Some("http://127.0.0.1:8123");
        assert_eq!(a.check(&asked("POST", "127.0.0.1:8123", own)), Ok(()));
        let other = Some("http://evil.example");
        assert!(matches!(
            a.check(&asked("POST", "127.0.0.1:8123", other)),
            Err(Denied::Origin(_))
        ));
        assert!(matches!(
            a.check(&asked("POST", "127.0.0.1:8123", None)),
            Err(Denied::Origin(_))
        ));
        let get_change = Asked {
            changes: true,
            ..asked("GET", "127.0.0.1:8123", own)
        };
        assert_eq!(a.check(&get_change), Err(Denied::Method));
        let t = Access::new("192.168.4.20:8123".parse().unwrap(), Some("abc123".into()));
        let bench = asked("GET", "192.168.4.20:8123", None);
        assert_eq!(t.check(&bench), Err(Denied::Token));
        assert_eq!(
            t.check(&Asked {
                token_query: Some("abc12"),
                ..bench
            }),
            Err(Denied::Token)
        );
        assert_eq!(
            t.check(&Asked {
                token_query: Some("abc123"),
                ..bench
            }),
            Ok(())
        );
        // on a bench network, localhost is not one of the console's names
        assert!(t.check(&asked("GET", "localhost:8123", None)).is_err());
        assert_eq!(new_token().unwrap().len(), 32);
    }
}
