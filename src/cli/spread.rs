//! `plumb spread`: one process of a distributed profile, or (`--local P`) P processes started
//! on this machine and watched until they all finish. The processes find each other through
//! the engine's host list; the library does the profile.

use std::ffi::OsString;
use std::net::TcpListener;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};

use super::args::InputArgs;
use super::{EXIT_IO, emit, is_stdout, usage};
use plumb::error::Error;
use plumb::outfile::refuse_overwrite;
use plumb::output::text as show;
use plumb::profile::report::{self, Report};
use plumb::spread::Peers;

/// How the run is laid out.
pub(crate) struct How {
    pub(crate) local: Option<usize>,
    pub(crate) peers: Option<PathBuf>,
    pub(crate) rank: Option<usize>,
    pub(crate) workers: usize,
    pub(crate) want: plumb::spread::SpreadOptions,
    /// No progress bar, even on a terminal.
    pub(crate) quiet: bool,
}

pub(crate) fn run(input: &InputArgs, json: Option<&Path>, how: &How) -> Result<(), Error> {
    if is_stdout(&input.input) {
        return Err(usage(
            "spread reads files (every process opens its own parts); standard input is not \
             accepted",
        ));
    }
    if let Some(j) = json {
        refuse_overwrite(j, &input.input)?;
    }
    stop_when_a_peer_is_lost();
    match how.local {
        Some(0) => Err(usage("--local needs at least 1 process")),
        Some(p) if p > 1 => launch_local(input, json, how, p),
        _ => {
            let peers = match (&how.peers, how.rank) {
                (Some(file), Some(rank)) => Peers::from_file(file, rank, how.workers)?,
                _ => Peers::alone(how.workers),
            };
            one_process(input, json, how, &peers)
        }
    }
}

/// This process's part of the run; process 0 prints or writes the report.
fn one_process(
    input: &InputArgs,
    json: Option<&Path>,
    how: &How,
    peers: &Peers,
) -> Result<(), Error> {
    let bars = std::sync::Arc::new(super::bars::Bars::new(how.quiet));
    let outcome = match plumb::spread::profile_reporting(
        &input.input,
        peers,
        &input.options(),
        &how.want,
        bars,
    ) {
        // Another process's failure is reported by that process and by process 0; the rest
        // leave with its exit code and say nothing more.
        Err(e @ Error::Remote { .. }) if peers.process != 0 => {
            std::process::exit(i32::from(super::exit_number(&e)))
        }
        r => r?,
    };
    let Some(outcome) = outcome else {
        return Ok(());
    };
    let sum = report::checksum(&input.input)?;
    let opts = plumb::profile::ProfileOptions {
        groups: plumb::profile::Groups {
            clustering: how.want.clustering != plumb::spread::SpreadClustering::Off,
            distances: how.want.distances != plumb::spread::SpreadDistances::Off,
            small_world: how.want.small_world,
        },
        level: how.want.level,
        seed: how.want.seed,
        threads: how.workers,
        ..Default::default()
    };
    let mut report = Report::with_checksum(outcome.profile, Some(&input.input), Some(sum), &opts);
    report.spread = Some(outcome.run.clone());
    emit(
        json,
        || {
            let mut t = serde_json::to_string_pretty(&report).unwrap_or_default();
            t.push('\n');
            t
        },
        || show::spread_text(&report.profile, &outcome.run),
    )
}

/// A lost connection panics inside the engine's network threads; say what it means and stop
/// the process (no report is written) instead of leaving the workers waiting.
fn stop_when_a_peer_is_lost() {
    let default = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        let payload = info.payload();
        let msg = payload
            .downcast_ref::<String>()
            .map(String::as_str)
            .or_else(|| payload.downcast_ref::<&str>().copied())
            .unwrap_or("");
        // The engine's documented prefix for network failures.
        if msg.contains("timely communication error") {
            eprintln!(
                "plumb: lost the connection to another process of the run ({msg}); it stopped \
                 or the network failed, so no report is written"
            );
            std::process::exit(i32::from(EXIT_IO));
        }
        default(info)
    }));
}

/// Start P - 1 more processes of this command on loopback ports, be process 0 among them, and
/// fail the whole run as soon as any of them fails.
fn launch_local(
    input: &InputArgs,
    json: Option<&Path>,
    how: &How,
    processes: usize,
) -> Result<(), Error> {
    // Ports the system has just handed out; the listeners close before the engine binds them.
    let listeners = (0..processes)
        .map(|_| TcpListener::bind("127.0.0.1:0"))
        .collect::<std::io::Result<Vec<_>>>()
        .map_err(|e| io_error("127.0.0.1", "find a free port on", e))?;
    let mut list = String::new();
    for l in &listeners {
        let port = l
            .local_addr()
            .map_err(|e| io_error("127.0.0.1", "find a free port on", e))?
            .port();
        list.push_str(&format!("127.0.0.1:{port}\n"));
    }
    drop(listeners);
    let dir = std::env::temp_dir().join(format!("plumb-spread-{}", std::process::id()));
    std::fs::create_dir_all(&dir).map_err(|e| io_error(&dir, "create", e))?;
    let peers_file = dir.join("peers.txt");
    plumb::outfile::write_atomic(&peers_file, list.as_bytes())?;
    let exe = std::env::current_exe().map_err(|e| io_error("plumb", "find its own program", e))?;
    let args = child_args();
    let mut children: Vec<(usize, Child)> = Vec::new();
    for rank in 1..processes {
        let child = Command::new(&exe)
            .args(&args)
            .arg("--peers")
            .arg(&peers_file)
            .arg("--rank")
            .arg(rank.to_string())
            .stdin(Stdio::null())
            .stdout(Stdio::null())
            .spawn();
        match child {
            Ok(c) => children.push((rank, c)),
            Err(e) => {
                for (_, c) in &mut children {
                    let _ = c.kill();
                }
                let _ = std::fs::remove_dir_all(&dir);
                return Err(io_error(&exe, "start", e));
            }
        }
    }
    let watch_dir = dir.clone();
    let done = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
    let seen = done.clone();
    let watcher = std::thread::spawn(move || watch(children, processes, &watch_dir, &seen));
    let peers = Peers::from_file(&peers_file, 0, how.workers)?;
    let result = one_process(input, json, how, &peers);
    done.store(true, std::sync::atomic::Ordering::SeqCst);
    if result.is_ok() {
        let _ = watcher.join();
    }
    let _ = std::fs::remove_dir_all(&dir);
    result
}

/// Wait for the other processes; the first that fails stops the others and this process. A
/// process that failed with a reported error (bad input, usage, budget) has told the others
/// through the engine, and process 0 ends with that error itself: it is given a moment to.
fn watch(
    mut children: Vec<(usize, Child)>,
    processes: usize,
    dir: &Path,
    done: &std::sync::atomic::AtomicBool,
) {
    while !children.is_empty() {
        let mut failed = None;
        children.retain_mut(|(rank, c)| match c.try_wait() {
            Ok(Some(s)) if s.success() => false,
            Ok(Some(s)) => {
                failed = Some((*rank, s.to_string(), s.code()));
                false
            }
            Ok(None) => true,
            Err(e) => {
                failed = Some((*rank, e.to_string(), None));
                false
            }
        });
        if let Some((rank, status, code)) = failed {
            let reported = matches!(code, Some(2 | 3 | 5));
            if reported {
                let until = std::time::Instant::now() + std::time::Duration::from_secs(3);
                while std::time::Instant::now() < until {
                    if done.load(std::sync::atomic::Ordering::SeqCst) {
                        return;
                    }
                    std::thread::sleep(std::time::Duration::from_millis(20));
                }
            }
            for (_, c) in &mut children {
                let _ = c.kill();
                let _ = c.wait();
            }
            let _ = std::fs::remove_dir_all(dir);
            eprintln!(
                "plumb: process {rank} of {processes} stopped ({status}); the run is abandoned \
                 and no report is written"
            );
            std::process::exit(match code {
                Some(c) if reported => c,
                _ => i32::from(EXIT_IO),
            });
        }
        std::thread::sleep(std::time::Duration::from_millis(50));
    }
}

/// This command's own words for a child: the same input and options, without `--local` and
/// `--json` (process 0 writes the report).
fn child_args() -> Vec<OsString> {
    let mut out = Vec::new();
    let mut skip = false;
    for a in std::env::args_os().skip(1) {
        if skip {
            skip = false;
            continue;
        }
        let s = a.to_string_lossy();
        if s == "--local" || s == "--json" {
            skip = true;
            continue;
        }
        if s.starts_with("--local=") || s.starts_with("--json=") {
            continue;
        }
        out.push(a);
    }
    out
}

fn io_error(path: impl Into<PathBuf>, action: &'static str, source: std::io::Error) -> Error {
    Error::Io {
        path: path.into(),
        action,
        source,
    }
}
