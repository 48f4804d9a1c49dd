// The teaching scenarios shipped with Sallyport: invented small businesses, one defence layer
// each (issue 12). Documentation addresses stand for the internet (RFC 5737, RFC 3849), private
// space for the inside (RFC 1918, RFC 4193). Each example carries probes a trainer can turn
// into a lesson; the first one is decided by the layer the example teaches, and every probe's
// stated layer and outcome are checked against trace() in tests/unit/training-examples.test.ts.
// Pure data: the server, the pages and the tests share it.
import type { DeviceModelInput, Layer, Outcome } from "../engine/index.ts";

/** A probe as a lesson step holds it: the trace page's fields, `to`, `at` and `account` optional. */
export type LessonProbe = { from: string; interface: string; service: string; to?: string; at?: string; account?: string };

export type ExampleProbe = {
  probe: LessonProbe;
  /** The layer that decides this probe, and what the outsider gets. */
  decides: Layer;
  outcome: Outcome;
  /** The trainer's short notes per layer, Markdown. */
  notes: Partial<Record<Layer, string>>;
};

export type TrainingExample = {
  key: string;
  title: string;
  /** The layer the example teaches (its first probe is decided there). */
  teaches: Layer;
  /** What it teaches, in a sentence or two (Markdown). */
  summary: string;
  document: DeviceModelInput;
  probes: readonly ExampleProbe[];
};

export const TRAINING_EXAMPLES: readonly TrainingExample[] = [
  {
    key: "stray-listener",
    title: "A listener that should not be there",
    teaches: "listener",
    summary:
      "Fernbrook Bakery's edge device answers SNMP on its **wan** interface, left over from an old monitoring contract. The listener layer stops only what does not listen: here it stops SSH, and lets SNMP through to answer the internet.",
    document: {
      schemaVersion: 2,
      device: { name: "fernbrook-edge", timezone: "Europe/Dublin", defaultInbound: "allow", unlistenedPort: "drop" },
      interfaces: [
        { name: "wan", role: "wan", addresses: ["203.0.113.10/24", "2001:db8:10::1/64"], listeners: ["https", "snmp"] },
        { name: "lan", role: "lan", addresses: ["10.10.0.1/24", "fd10:10::1/64"], listeners: ["https", "ssh", "snmp", "ping"] },
      ],
      addresses: [{ name: "bakery-lan", entries: ["10.10.0.0/24", "fd10:10::/64"] }],
      inboundRules: [{ id: "allow-bakery-admin", interface: "lan", sources: ["bakery-lan"], destinations: ["any"], services: ["https", "ssh"], action: "allow" }],
      accounts: [{ name: "ops-orla", loginSources: ["bakery-lan"], secondFactor: "totp" }],
      operatorNetworks: ["bakery-lan"],
    },
    probes: [
      {
        probe: { from: "203.0.113.50", interface: "wan", service: "ssh" },
        decides: "listener",
        outcome: "silent",
        notes: {
          "inbound-rules": "No rule names **wan**, and the default is *allow*: rules restrict nothing here.",
          listener: "SSH does not listen on **wan**, and unlistened ports are dropped: nothing answers. This is the layer doing its job.",
        },
      },
      {
        probe: { from: "203.0.113.50", interface: "wan", service: "snmp" },
        decides: "service-kind",
        outcome: "answered",
        notes: {
          listener: "SNMP **does** listen on wan. Nobody needs it there — this listener should not be there.",
          "service-kind": "SNMP is not a login service: it simply answers, and the device is revealed to any scanner.",
        },
      },
      {
        probe: { from: "203.0.113.50", interface: "wan", service: "https" },
        decides: "login-sources",
        outcome: "login-denied",
        notes: {
          "login-sources": "The login page shows, but *ops-orla* may log in only from the bakery's own network: the login is refused. The page still tells a scanner the device is there.",
        },
      },
    ],
  },
  {
    key: "rule-order",
    title: "Rule order: the first match wins",
    teaches: "inbound-rules",
    summary:
      "Marlowe Freight's gateway drops everything from the internet — in a rule placed *above* the one that lets the operations centre in. Rules are read top to bottom and the first match decides, so the operations centre is locked out.",
    document: {
      schemaVersion: 2,
      device: { name: "marlowe-gw", timezone: "Europe/Amsterdam", defaultInbound: "allow", unlistenedPort: "drop" },
      interfaces: [
        { name: "outside", role: "wan", addresses: ["198.51.100.2/24"], listeners: ["https", "ssh", "ping"] },
        { name: "inside", role: "lan", addresses: ["10.20.0.1/16"], listeners: ["https", "ssh"] },
      ],
      addresses: [
        { name: "ops-centre", entries: ["192.0.2.64/27"] },
        { name: "depot-admins", entries: ["10.20.5.0/24"] },
      ],
      inboundRules: [
        { id: "drop-internet", interface: "outside", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny", note: "meant to be the last rule" },
        { id: "allow-ops-centre", interface: "outside", sources: ["ops-centre"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
        { id: "allow-depot-admins", interface: "inside", sources: ["depot-admins"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
        { id: "drop-inside", interface: "inside", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
      ],
      accounts: [{ name: "ops-ada", loginSources: ["ops-centre", "depot-admins"], secondFactor: "totp" }],
      operatorNetworks: ["ops-centre"],
    },
    probes: [
      {
        probe: { from: "192.0.2.70", interface: "outside", service: "https" },
        decides: "inbound-rules",
        outcome: "silent",
        notes: {
          arrival: "192.0.2.70 is inside *ops-centre*, the network the team administers from.",
          "inbound-rules": "**drop-internet** is read first and matches every source: the operations centre's own rule below it is never reached. Move the drop to the end.",
        },
      },
      {
        probe: { from: "10.20.5.9", interface: "inside", service: "ssh" },
        decides: "second-factor",
        outcome: "login-mfa",
        notes: {
          "inbound-rules": "On **inside** the order is right: the allow for the depot admins comes before the drop.",
          "second-factor": "*ops-ada* has a second factor: a password alone is not enough.",
        },
      },
    ],
  },
  {
    key: "login-sources",
    title: "Login sources: the page answers, the login is refused",
    teaches: "login-sources",
    summary:
      "Quillon Dental publishes its web console on the internet so its IT partner can reach it. Each account may log in only from listed networks — but a refused login still shows the page, so this layer does not hide the device.",
    document: {
      schemaVersion: 2,
      device: { name: "quillon-fw", timezone: "Europe/London", defaultInbound: "allow", unlistenedPort: "drop" },
      interfaces: [
        { name: "wan", role: "wan", addresses: ["203.0.113.20/24"], listeners: ["https"] },
        { name: "lan", role: "lan", addresses: ["192.168.20.1/24"], listeners: ["https", "ssh"] },
      ],
      addresses: [
        { name: "practice-lan", entries: ["192.168.20.0/24"] },
        { name: "it-partner", entries: ["198.51.100.128/28"] },
      ],
      inboundRules: [
        { id: "allow-console", interface: "wan", sources: ["any"], destinations: ["any"], services: ["https"], action: "allow", note: "so the IT partner can reach it" },
        { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
      ],
      accounts: [
        { name: "partner-ben", loginSources: ["it-partner"], secondFactor: "totp" },
        { name: "practice-admin", loginSources: ["practice-lan"], secondFactor: "totp" },
      ],
      operatorNetworks: ["practice-lan", "it-partner"],
    },
    probes: [
      {
        probe: { from: "192.0.2.50", interface: "wan", service: "https" },
        decides: "login-sources",
        outcome: "login-denied",
        notes: {
          "inbound-rules": "**allow-console** lets every source reach the web console.",
          "login-sources": "Neither account may log in from 192.0.2.50: the login is refused — after the page has shown. A scanner still learns the device is there.",
        },
      },
      {
        probe: { from: "198.51.100.130", interface: "wan", service: "https" },
        decides: "second-factor",
        outcome: "login-mfa",
        notes: {
          "login-sources": "198.51.100.130 is in *it-partner*: *partner-ben* may log in from here.",
        },
      },
    ],
  },
  {
    key: "second-factor",
    title: "The second factor: one account without it is enough",
    teaches: "second-factor",
    summary:
      "Tessaly Library lets its support vendor in over the internet. Two accounts may log in from the vendor's network; one of them has no second factor, so a password alone logs in.",
    document: {
      schemaVersion: 2,
      device: { name: "tessaly-gw", timezone: "Europe/Helsinki", defaultInbound: "allow", unlistenedPort: "drop" },
      interfaces: [
        { name: "uplink", role: "wan", addresses: ["192.0.2.30/24", "2001:db8:30::1/64"], listeners: ["https", "ssh"] },
        { name: "staff", role: "lan", addresses: ["10.30.0.1/16"], listeners: ["https", "ssh"] },
      ],
      addresses: [
        { name: "library-staff", entries: ["10.30.0.0/16"] },
        { name: "support-vendor", entries: ["198.51.100.32/28"] },
      ],
      inboundRules: [
        { id: "allow-vendor", interface: "uplink", sources: ["support-vendor"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
        { id: "allow-staff", interface: "staff", sources: ["library-staff"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
        { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
      ],
      accounts: [
        { name: "ops-viljo", loginSources: ["library-staff", "support-vendor"], secondFactor: "totp" },
        { name: "vendor-support", loginSources: ["support-vendor"], secondFactor: "none" },
      ],
      operatorNetworks: ["library-staff"],
    },
    probes: [
      {
        probe: { from: "198.51.100.40", interface: "uplink", service: "https" },
        decides: "second-factor",
        outcome: "login-password",
        notes: {
          "login-sources": "Both *ops-viljo* and *vendor-support* may log in from the vendor's network.",
          "second-factor": "*vendor-support* has no second factor: a stolen or guessed password is enough. Every eligible account counts.",
        },
      },
      {
        probe: { from: "198.51.100.40", interface: "uplink", service: "https", account: "ops-viljo" },
        decides: "second-factor",
        outcome: "login-mfa",
        notes: {
          "second-factor": "Asked about *ops-viljo* alone, the login needs the second factor (TOTP, RFC 6238).",
        },
      },
    ],
  },
  {
    key: "schedule-window",
    title: "A schedule window: the rule that sleeps at weekends",
    teaches: "inbound-rules",
    summary:
      "Oriel Garden Centre lets its support company in only during support hours, Monday to Friday 08:00–17:00 Lisbon time. Outside the window the rule is not active, the next rule matches, and the same probe gets no answer.",
    document: {
      schemaVersion: 2,
      device: { name: "oriel-edge", timezone: "Europe/Lisbon", defaultInbound: "allow", unlistenedPort: "drop" },
      interfaces: [
        { name: "wan", role: "wan", addresses: ["203.0.113.40/24"], listeners: ["https", "ssh"] },
        { name: "lan", role: "lan", addresses: ["10.40.0.1/24"], listeners: ["https", "ssh"] },
      ],
      addresses: [
        { name: "support-company", entries: ["198.51.100.64/28"] },
        { name: "shop-lan", entries: ["10.40.0.0/24"] },
      ],
      schedules: [{ name: "support-hours", windows: [{ days: ["mon", "tue", "wed", "thu", "fri"], start: "08:00", end: "17:00" }] }],
      inboundRules: [
        { id: "allow-support", interface: "wan", sources: ["support-company"], destinations: ["any"], services: ["https"], schedule: "support-hours", action: "allow" },
        { id: "allow-shop", interface: "lan", sources: ["shop-lan"], destinations: ["any"], services: ["https", "ssh"], action: "allow" },
        { id: "drop-rest", interface: "any", sources: ["any"], destinations: ["any"], services: ["any"], action: "deny" },
      ],
      accounts: [
        { name: "support-rui", loginSources: ["support-company"], secondFactor: "totp" },
        { name: "shop-admin", loginSources: ["shop-lan"], secondFactor: "totp" },
      ],
      operatorNetworks: ["shop-lan"],
    },
    probes: [
      {
        // Saturday 5 December 2026, 10:00 in Lisbon (UTC+0 in winter).
        probe: { from: "198.51.100.70", interface: "wan", service: "https", at: "2026-12-05T10:00:00Z" },
        decides: "inbound-rules",
        outcome: "silent",
        notes: {
          "inbound-rules": "Saturday: **allow-support** is not active outside *support-hours*, so **drop-rest** is the first match. No answer at all.",
        },
      },
      {
        // Tuesday 8 December 2026, 10:00 in Lisbon.
        probe: { from: "198.51.100.70", interface: "wan", service: "https", at: "2026-12-08T10:00:00Z" },
        decides: "second-factor",
        outcome: "login-mfa",
        notes: {
          "inbound-rules": "Tuesday morning, inside the window: **allow-support** matches first.",
          "second-factor": "*support-rui* logs in with a second factor.",
        },
      },
    ],
  },
  {
    key: "ipv6-only-path",
    title: "An IPv6-only path",
    teaches: "arrival",
    summary:
      "Halden Rowing Club's management interface has only an IPv6 address, and the IPv4 catch-all on wan names `any4`. IPv4 probes never arrive on the management interface — IPv6 ones do, and nothing stops them.",
    document: {
      schemaVersion: 2,
      device: { name: "halden-gw", timezone: "Europe/Oslo", defaultInbound: "allow", unlistenedPort: "drop" },
      interfaces: [
        { name: "wan", role: "wan", addresses: ["192.0.2.60/24", "2001:db8:60::1/64"], listeners: ["https"] },
        { name: "mgmt6", role: "management", addresses: ["2001:db8:61::1/64"], listeners: ["https", "ssh"] },
        { name: "club", role: "lan", addresses: ["10.60.0.1/24"], listeners: ["https", "ssh"] },
      ],
      addresses: [{ name: "club-lan", entries: ["10.60.0.0/24"] }],
      inboundRules: [{ id: "drop-wan-v4", interface: "wan", sources: ["any4"], destinations: ["any"], services: ["any"], action: "deny", note: "IPv4 only" }],
      accounts: [
        { name: "club-admin", loginSources: ["club-lan"], secondFactor: "totp" },
        { name: "coach-kari", loginSources: [], secondFactor: "totp" },
      ],
      operatorNetworks: ["club-lan"],
    },
    probes: [
      {
        probe: { from: "203.0.113.50", interface: "mgmt6", service: "ssh" },
        decides: "arrival",
        outcome: "silent",
        notes: {
          arrival: "**mgmt6** has no IPv4 address: an IPv4 probe never arrives there, whatever the rules say.",
        },
      },
      {
        probe: { from: "2001:db8:ffff::50", interface: "mgmt6", service: "ssh" },
        decides: "second-factor",
        outcome: "login-mfa",
        notes: {
          arrival: "The same question over IPv6 arrives: **mgmt6** has 2001:db8:61::1.",
          "inbound-rules": "No rule names **mgmt6**, and the default is *allow*.",
          "login-sources": "*coach-kari* has no login sources: anywhere may log in.",
        },
      },
      {
        probe: { from: "2001:db8:ffff::50", interface: "wan", service: "https" },
        decides: "second-factor",
        outcome: "login-mfa",
        notes: {
          "inbound-rules": "**drop-wan-v4** names `any4`: it never matches an IPv6 source. The catch-all has a hole as wide as IPv6.",
        },
      },
    ],
  },
  {
    key: "echo-answers",
    title: "An echo that tells",
    teaches: "service-kind",
    summary:
      "Brackwater Clinic's rules guard the web console but not ping, and ping listens on wan. An echo service has no login to refuse: it answers, and any reply tells a scanner the device is there.",
    document: {
      schemaVersion: 2,
      device: { name: "brackwater-edge", timezone: "Europe/Berlin", defaultInbound: "allow", unlistenedPort: "drop" },
      interfaces: [
        { name: "wan", role: "wan", addresses: ["198.51.100.90/24"], listeners: ["https", "ping"] },
        { name: "clinic", role: "lan", addresses: ["172.16.90.1/24"], listeners: ["https", "ssh", "ping"] },
      ],
      addresses: [
        { name: "clinic-lan", entries: ["172.16.90.0/24"] },
        { name: "remote-it", entries: ["203.0.113.96/29"] },
      ],
      inboundRules: [
        { id: "allow-remote-it", interface: "wan", sources: ["remote-it"], destinations: ["any"], services: ["https"], action: "allow" },
        { id: "drop-console", interface: "wan", sources: ["any"], destinations: ["any"], services: ["https"], action: "deny" },
      ],
      accounts: [{ name: "it-mira", loginSources: ["remote-it", "clinic-lan"], secondFactor: "totp" }],
      operatorNetworks: ["clinic-lan"],
    },
    probes: [
      {
        probe: { from: "192.0.2.77", interface: "wan", service: "ping" },
        decides: "service-kind",
        outcome: "answered",
        notes: {
          "inbound-rules": "No rule covers ping on **wan**; the default is *allow*.",
          listener: "Ping listens on **wan**.",
          "service-kind": "An echo service has no login to refuse: it replies, and the device is revealed.",
        },
      },
      {
        probe: { from: "192.0.2.77", interface: "wan", service: "https" },
        decides: "inbound-rules",
        outcome: "silent",
        notes: {
          "inbound-rules": "The web console is guarded: **drop-console** matches and nothing answers.",
        },
      },
    ],
  },
];

export function trainingExample(key: string): TrainingExample | undefined {
  return TRAINING_EXAMPLES.find((example) => example.key === key);
}
