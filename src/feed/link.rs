//! Line-by-line links to instruments: a TCP socket or a serial port in raw mode, both with a
//! read timeout so a silent instrument never hangs its source.

use std::fs::{File, OpenOptions};
use std::io::{self, Read, Write};
use std::net::{TcpStream, ToSocketAddrs};
use std::os::unix::fs::OpenOptionsExt;
use std::path::Path;
use std::time::Duration;

use rustix::termios::{self, OptionalActions, SpecialCodeIndex};

/// How long an instrument may take to answer one query.
pub const ANSWER_TIMEOUT: Duration = Duration::from_secs(2);
/// A serial read returns after this long without a byte (termios VTIME counts tenths).
const SERIAL_POLL_DECISECONDS: u8 = 2;
/// A line longer than this is no reading; it is cut and counted as garbage.
const MAX_LINE_BYTES: usize = 4096;

/// Bytes in, whole lines out; a line split across reads (or timeouts) is kept until its end.
#[derive(Default)]
pub struct LineAssembler {
    partial: Vec<u8>,
}

impl LineAssembler {
    /// Adds bytes and returns the lines they completed, without their line ends.
    pub fn push(&mut self, bytes: &[u8]) -> Vec<String> {
        let mut lines = Vec::new();
        for &byte in bytes {
            if byte == b'\n' {
                let line = String::from_utf8_lossy(&self.partial)
                    .trim_end_matches('\r')
                    .to_string();
                lines.push(line);
                self.partial.clear();
            } else if self.partial.len() < MAX_LINE_BYTES {
                self.partial.push(byte);
            }
        }
        lines
    }
}

/// A connection that sends a command line and reads an answer line.
pub struct Link {
    stream: Box<dyn ReadWrite>,
    /// A serial read comes back empty after its poll time; a socket's only at its end.
    serial: bool,
    lines: LineAssembler,
    waiting: std::collections::VecDeque<String>,
}

trait ReadWrite: Read + Write + Send {}
impl<T: Read + Write + Send> ReadWrite for T {}

impl Link {
    pub fn tcp(address: &str) -> io::Result<Link> {
        let target = address
            .to_socket_addrs()?
            .next()
            .ok_or_else(|| io::Error::new(io::ErrorKind::NotFound, "no such host"))?;
        let stream = TcpStream::connect_timeout(&target, ANSWER_TIMEOUT)?;
        stream.set_read_timeout(Some(ANSWER_TIMEOUT))?;
        stream.set_write_timeout(Some(ANSWER_TIMEOUT))?;
        stream.set_nodelay(true)?;
        Ok(Link::over(stream, false))
    }

    pub fn serial(device: &Path, baud: u32) -> io::Result<Link> {
        Ok(Link::over(open_serial(device, baud)?, true))
    }

    fn over(stream: impl Read + Write + Send + 'static, serial: bool) -> Link {
        Link {
            stream: Box::new(stream),
            serial,
            lines: LineAssembler::default(),
            waiting: Default::default(),
        }
    }

    /// Sends one command line (SCPI ends a program message with a newline).
    pub fn send(&mut self, command: &str) -> io::Result<()> {
        self.stream.write_all(format!("{command}\n").as_bytes())?;
        self.stream.flush()
    }

    /// Sends a query and returns its answer line, dropping any stale line left from an
    /// earlier query that timed out.
    pub fn query(&mut self, query: &str) -> io::Result<String> {
        self.waiting.clear();
        self.send(query)?;
        self.read_line(ANSWER_TIMEOUT)
    }

    /// The next line, or `TimedOut` after `timeout` without one.
    pub fn read_line(&mut self, timeout: Duration) -> io::Result<String> {
        let deadline = std::time::Instant::now() + timeout;
        let mut buffer = [0u8; 512];
        loop {
            if let Some(line) = self.waiting.pop_front() {
                return Ok(line);
            }
            if std::time::Instant::now() >= deadline {
                return Err(io::Error::new(io::ErrorKind::TimedOut, "no answer"));
            }
            match self.stream.read(&mut buffer) {
                Ok(0) if !self.serial => {
                    return Err(io::ErrorKind::ConnectionAborted.into());
                }
                Ok(n) => {
                    let lines = self.lines.push(&buffer[..n]);
                    self.waiting.extend(lines);
                }
                Err(e)
                    if matches!(
                        e.kind(),
                        io::ErrorKind::WouldBlock | io::ErrorKind::TimedOut
                    ) => {}
                Err(e) if e.kind() == io::ErrorKind::Interrupted => {}
                Err(e) => return Err(e),
            }
        }
    }
}

/// Opens a serial device in raw mode at `baud`, with reads that return after a short poll.
pub fn open_serial(device: &Path, baud: u32) -> io::Result<File> {
    let file = OpenOptions::new()
        .read(true)
        .write(true)
        // Not the controlling terminal: a hang-up on the port must not end the feeder.
        .custom_flags(rustix::fs::OFlags::NOCTTY.bits() as i32)
        .open(device)?;
    let mut settings = termios::tcgetattr(&file)?;
    settings.make_raw();
    settings.set_speed(baud)?;
    settings.special_codes[SpecialCodeIndex::VMIN] = 0;
    settings.special_codes[SpecialCodeIndex::VTIME] = SERIAL_POLL_DECISECONDS;
    termios::tcsetattr(&file, OptionalActions::Now, &settings)?;
    Ok(file)
}
