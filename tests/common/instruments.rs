//! Simulated bench instruments for the feeder's tests: a SCPI supply answering on a loopback
//! TCP port or on a pseudo-terminal, and a line logger printing on a pseudo-terminal.
//!
//! Every value a supply answers is unique (a counter in its last digits), so a test can tell a
//! reading stored twice from two readings of the same value.
#![allow(dead_code)] // each test file uses part of the kit

use std::fs::File;
use std::io::{BufRead, BufReader, Write};
use std::net::TcpListener;
use std::os::fd::OwnedFd;
use std::path::PathBuf;
use std::sync::{Arc, Mutex};
use std::time::Instant;

use rustix::pty::{OpenptFlags, grantpt, openpt, ptsname, unlockpt};
use rustix::termios::{self, OptionalActions};

/// What a simulated supply was asked and answered.
#[derive(Default)]
pub struct SupplyLog {
    /// (query, value answered), in order.
    pub answered: Vec<(String, f64)>,
    /// When an output-off command arrived, and which.
    pub output_off: Vec<(Instant, String)>,
    /// Answer the next this many current queries with SCPI's overflow 9.9E37.
    pub overflow_next: usize,
    /// Answer the next this many voltage queries with garbage.
    pub garbage_next: usize,
    counter: u64,
}

#[derive(Clone, Default)]
pub struct Supply {
    pub log: Arc<Mutex<SupplyLog>>,
}

impl Supply {
    /// The answer to one command line; `None` for a command (no answer).
    pub fn answer(&self, line: &str) -> Option<String> {
        let mut log = self.log.lock().unwrap();
        let command = line.trim();
        let value = |log: &mut SupplyLog, base: f64, step: f64| {
            log.counter += 1;
            let value = base + step * log.counter as f64;
            log.answered.push((command.to_string(), value));
            format!("{value:.6E}")
        };
        match command {
            "*IDN?" => Some("Test bench supply,SIM-1,0001,1.0".into()),
            "MEAS:VOLT?" if log.garbage_next > 0 => {
                log.garbage_next -= 1;
                Some("#?!\u{7f}".into())
            }
            "MEAS:CURR?" if log.overflow_next > 0 => {
                log.overflow_next -= 1;
                Some("+9.90000E+37".into())
            }
            "MEAS:VOLT?" => Some(value(&mut log, 24.0, 1e-4)),
            "MEAS:CURR?" => Some(value(&mut log, 2.0, 1e-4)),
            "MEAS:FREQ?" => Some(value(&mut log, 100_000.0, 1.0)),
            c if c.starts_with("OUTP") && c.ends_with("OFF") => {
                log.output_off.push((Instant::now(), c.to_string()));
                None
            }
            _ => Some("-113,\"Undefined header\"".into()),
        }
    }

    /// Values answered to a query, in order.
    pub fn answered(&self, query: &str) -> Vec<f64> {
        let log = self.log.lock().unwrap();
        log.answered
            .iter()
            .filter(|(q, _)| q == query)
            .map(|(_, v)| *v)
            .collect()
    }

    /// Serves SCPI on a loopback port, one client at a time; returns `127.0.0.1:port`.
    pub fn on_tcp(&self) -> String {
        let listener = TcpListener::bind("127.0.0.1:0").unwrap();
        let address = listener.local_addr().unwrap().to_string();
        let supply = self.clone();
        std::thread::spawn(move || {
            for stream in listener.incoming() {
                let Ok(stream) = stream else { continue };
                let supply = supply.clone();
                std::thread::spawn(move || {
                    let mut writer = stream.try_clone().unwrap();
                    for line in BufReader::new(stream).lines() {
                        let Ok(line) = line else { return };
                        if let Some(answer) = supply.answer(&line)
                            && writeln!(writer, "{answer}").is_err()
                        {
                            return;
                        }
                    }
                });
            }
        });
        address
    }

    /// Serves SCPI on a pseudo-terminal; returns the device the feeder opens.
    pub fn on_pty(&self) -> PathBuf {
        let pty = Pty::open();
        let device = pty.device.clone();
        let supply = self.clone();
        std::thread::spawn(move || {
            let mut writer = pty.master_file();
            let reader = BufReader::new(pty.master_file());
            for line in reader.lines() {
                let Ok(line) = line else { return };
                if let Some(answer) = supply.answer(&line) {
                    let _ = write!(writer, "{answer}\r\n");
                }
            }
            drop(pty);
        });
        device
    }
}

/// A pseudo-terminal: the instrument's end (master) and the device path a feeder opens. The
/// test keeps the device open too, so a feeder that is killed does not hang the line up.
pub struct Pty {
    master: OwnedFd,
    _held: File,
    pub device: PathBuf,
}

impl Pty {
    pub fn open() -> Pty {
        let master = openpt(OpenptFlags::RDWR | OpenptFlags::NOCTTY).unwrap();
        grantpt(&master).unwrap();
        unlockpt(&master).unwrap();
        let name = ptsname(&master, Vec::new()).unwrap();
        let device = PathBuf::from(name.to_str().unwrap());
        let held = std::fs::OpenOptions::new()
            .read(true)
            .write(true)
            .open(&device)
            .unwrap();
        // Raw and without echo from the start, so nothing written before the feeder opens the
        // port comes back to the instrument as if the feeder had sent it.
        let mut settings = termios::tcgetattr(&held).unwrap();
        settings.make_raw();
        termios::tcsetattr(&held, OptionalActions::Now, &settings).unwrap();
        Pty {
            master,
            _held: held,
            device,
        }
    }

    pub fn master_file(&self) -> File {
        File::from(self.master.try_clone().unwrap())
    }
}

/// A line logger on a pseudo-terminal: the test writes its lines.
pub struct LineLogger {
    pty: Pty,
    writer: File,
}

impl LineLogger {
    pub fn open() -> LineLogger {
        let pty = Pty::open();
        let writer = pty.master_file();
        LineLogger { pty, writer }
    }

    pub fn device(&self) -> PathBuf {
        self.pty.device.clone()
    }

    pub fn print(&mut self, line: &str) {
        write!(self.writer, "{line}\r\n").unwrap();
        self.writer.flush().unwrap();
    }
}
