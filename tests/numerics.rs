//! Values that would break the arithmetic are findings, never a NaN, an
//! infinity or a panic.

use catena::check::check_str;

fn codes(spec: &str) -> Vec<String> {
    check_str("n.catena", spec)
        .findings
        .sorted()
        .into_iter()
        .map(|f| f.code.as_str().to_string())
        .collect()
}

fn chain(amplifier: &str, adc: &str, sensor: &str) -> String {
    format!(
        "chain a {{\n    measurand temperature 0 degC .. 50 degC\n    sensor ic {{\n{sensor}\n    }}\n    amplifier front {{\n{amplifier}\n    }}\n    adc conv {{\n        bits 12\n        input single\n{adc}\n    }}\n    convert reading {{ method exact }}\n    ic -> front -> conv -> reading\n}}\n"
    )
}

const IC: &str = "        ic_voltage\n        slope 10 mV/K\n        output 500 mV at 0 degC";

#[test]
fn zero_gain() {
    assert_eq!(
        codes(&chain("        gain 0", "        vref 2.5 V", IC)),
        vec!["P305"]
    );
}

#[test]
fn zero_and_negative_resistance() {
    let spec = "chain a {\n    measurand temperature 0 degC .. 50 degC\n    excitation e { current 1 mA }\n    sensor r { resistor -100 ohm }\n    sensor p {\n        rtd custom\n        r0 0 ohm\n        coefficients 3.9e-3 -5.8e-7 0\n    }\n    adc conv {\n        bits 12\n        input single\n        vref 2.5 V\n    }\n    convert reading { method exact }\n    e -> p -> conv -> reading\n    e -> r\n}\n";
    let found = codes(spec);
    assert_eq!(
        found.iter().filter(|c| *c == "P305").count(),
        2,
        "{found:?}"
    );
}

#[test]
fn zero_reference() {
    assert_eq!(
        codes(&chain("        gain 2", "        vref 0 V", IC)),
        vec!["P305"]
    );
}

/// A thermistor curve whose logarithm has no argument: E503, not a NaN.
#[test]
fn log_of_a_non_positive_value() {
    let spec = "chain a {\n    measurand temperature 0 degC .. 50 degC\n    excitation rail { voltage 3.3 V }\n    sensor ntc {\n        thermistor\n        r25 10 kohm\n        steinhart 1 0 0\n    }\n    bridge div {\n        divider\n        r 10 kohm\n    }\n    adc conv {\n        bits 12\n        input single\n    }\n    convert reading { method exact }\n    rail -> div -> conv -> reading\n    ntc -> div.arm\n    rail -> conv.ref\n}\n";
    assert_eq!(codes(spec), vec!["E503"]);
}

#[test]
fn overflow() {
    assert_eq!(
        codes(&chain("        gain 1e999", "        vref 2.5 V", IC)),
        vec!["S010"]
    );
}

/// A gain so large the signal leaves every limit: a range finding, and the
/// budget's numbers stay finite.
#[test]
fn extreme_values_stay_finite() {
    let spec = chain(
        "        gain 1e300\n        output 0 V .. 5 V",
        "        vref 2.5 V",
        IC,
    );
    let found = codes(&spec);
    assert!(!found.is_empty(), "an extreme gain is a finding");
    for f in check_str("n.catena", &spec).findings.iter() {
        assert!(
            !f.message.contains("NaN") && !f.message.contains("inf"),
            "{}",
            f.message
        );
    }
}
