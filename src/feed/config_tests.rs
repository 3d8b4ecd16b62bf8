use super::*;

fn parse(text: &str) -> Result<FeedConfig, ConfigError> {
    parse_config(text, Path::new("/tmp"))
}

fn refused(text: &str) -> ConfigError {
    parse(text).expect_err("the config should be refused")
}

const SUPPLY: &str = r#"
[[source]]
kind = "scpi-tcp"            # a bench supply on the LAN
address = "192.0.2.10:5025"
every_s = 0.5
stop_supply = true
[source.channels]
supply_voltage = "MEAS:VOLT?"
supply_current = "MEAS:CURR?"

[[source]]
kind = "lines-file"
path = "logger.csv"
[source.channels]
"temp.tank_capacitor.1" = "T1"
"#;

#[test]
fn reads_the_documented_shape() {
    let config = parse(SUPPLY).unwrap();
    assert_eq!(config.sources.len(), 2);
    let supply = &config.sources[0];
    assert_eq!(supply.kind, SourceKind::ScpiTcp);
    assert_eq!(
        supply.access,
        Access::Tcp {
            address: "192.0.2.10:5025".into()
        }
    );
    assert_eq!(supply.every_s, 0.5);
    assert_eq!(
        supply.channels,
        vec![
            (Channel::SupplyVoltage, "MEAS:VOLT?".into()),
            (Channel::SupplyCurrent, "MEAS:CURR?".into()),
        ]
    );
    assert_eq!(
        supply.stop,
        Some(StopSwitch {
            off_command: "OUTP OFF".into(),
            within_s: DEFAULT_STOP_WITHIN_S,
        })
    );
    assert_eq!(supply.label(), "scpi-tcp 192.0.2.10:5025");
    let logger = &config.sources[1];
    assert_eq!(
        logger.access,
        Access::File {
            path: "/tmp/logger.csv".into()
        }
    );
    assert_eq!(logger.channels[0].1, "T1");
    assert_eq!(logger.stop, None);
}

#[test]
fn a_misspelt_key_is_named_with_its_line() {
    let error = refused("[[source]]\nkind = \"scpi-tcp\"\nadress = \"192.0.2.10:5025\"\n");
    assert_eq!(error.line, Some(3), "{error}");
    assert!(error.message.contains("adress"), "{error}");
}

#[test]
fn an_unknown_kind_is_named_with_its_line() {
    let error = refused("\n[[source]]\nkind = \"scpi-usb\"\n");
    assert_eq!(error.line, Some(3));
    assert!(
        error
            .to_string()
            .starts_with("line 3: unknown kind `scpi-usb`")
    );
}

#[test]
fn an_unknown_channel_is_named_with_its_line() {
    let error = refused(
        "[[source]]\nkind = \"scpi-tcp\"\naddress = \"h:1\"\n[source.channels]\nsupply_voltage = \"MEAS:VOLT?\"\nsupply_volts = \"MEAS:VOLT?\"\n",
    );
    assert_eq!(error.line, Some(6));
    assert!(error.message.contains("unknown channel `supply_volts`"));
}

#[test]
fn a_missing_device_is_refused() {
    let error = refused(
        "[[source]]\nkind = \"lines-serial\"\ndevice = \"/dev/ttyNOSUCH9\"\nbaud = 115200\n",
    );
    assert_eq!(error.line, Some(3));
    assert_eq!(error.message, "device /dev/ttyNOSUCH9 does not exist");
}

#[test]
fn keys_of_another_kind_are_refused() {
    let error = refused("[[source]]\nkind = \"stdin\"\npath = \"x.log\"\nevery_s = 2.0\n");
    assert_eq!(error.line, Some(3));
    assert_eq!(error.message, "`path` does not apply to a stdin source");
    let error = refused("[[source]]\nkind = \"lines-file\"\npath = \"a\"\nstop_supply = true\n");
    assert_eq!(
        error.message,
        "`stop_supply` does not apply to a lines-file source"
    );
}

#[test]
fn what_a_kind_needs_is_asked_for() {
    let error =
        refused("[[source]]\nkind = \"scpi-tcp\"\n[source.channels]\nfrequency = \"MEAS:FREQ?\"\n");
    assert_eq!(error.message, "a scpi-tcp source needs `address`");
    let error = refused("[[source]]\nkind = \"scpi-tcp\"\naddress = \"h:5025\"\n");
    assert!(error.message.contains("needs a [source.channels] table"));
    let error = refused("[[source]]\nkind = \"scpi-tcp\"\naddress = \"5025\"\n");
    assert_eq!(error.line, Some(3));
    assert!(error.message.contains("is not host:port"));
}

#[test]
fn bad_values_are_refused() {
    let base = "[[source]]\nkind = \"scpi-tcp\"\naddress = \"h:1\"\n";
    let channels = "[source.channels]\nfrequency = \"MEAS:FREQ?\"\n";
    for (extra, line, says) in [
        ("every_s = 0.0\n", 4, "every_s must be from"),
        ("every_s = \"1\"\n", 4, "invalid type"),
        ("stop_supply = true\nstop_within_s = -5.0\n", 5, "0 or more"),
        (
            "off_command = \"OUTP 0\"\n",
            4,
            "needs `stop_supply = true`",
        ),
    ] {
        let error = refused(&format!("{base}{extra}{channels}"));
        assert_eq!(error.line, Some(line), "{extra}: {error}");
        assert!(error.message.contains(says), "{extra}: {error}");
    }
    for (table, line, says) in [
        ("[source.channels]\nfrequency = \"\"\n", 5, "needs a query"),
        ("[source.channels]\n", 4, "names no channel"),
    ] {
        let error = refused(&format!("{base}{table}"));
        assert_eq!(error.line, Some(line), "{table}: {error}");
        assert!(error.message.contains(says), "{table}: {error}");
    }
}

#[test]
fn one_channel_has_one_source() {
    let text = "[[source]]\nkind = \"stdin\"\n[source.channels]\nfrequency = \"f\"\n\n[[source]]\nkind = \"lines-file\"\npath = \"a\"\n[source.channels]\nfrequency = \"F\"\n";
    let error = refused(text);
    assert!(
        error.message.contains("read by the source on line 1"),
        "{error}"
    );
}

#[test]
fn an_empty_file_and_broken_toml_are_refused() {
    assert!(refused("").message.contains("no [[source]]"));
    let error = refused("[[source]]\nkind = \"stdin\n");
    assert_eq!(error.line, Some(2), "{error}");
    let error = refused("[[sauce]]\nkind = \"stdin\"\n");
    assert_eq!(error.line, Some(1));
    assert!(error.message.contains("sauce"));
}
