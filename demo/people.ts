/**
 * The demo's invented people, shops and experts. No real businesses, persons or brands: the makes
 * are invented names (Veltra, Korrin, Astaro, Meridane, Tovak). Every account uses DEMO_PASSWORD.
 */
import type { VehicleSystem } from "../shared/domain/case-status";

export interface DemoPerson {
  key: string;
  email: string;
  name: string;
  color: string;
}

export interface DemoShop {
  key: string;
  name: string;
  owner: DemoPerson;
  technicians: DemoPerson[];
}

export interface DemoExpert extends DemoPerson {
  status: "approved" | "pending";
  systems: VehicleSystem[];
  makes: string[];
  bio: string;
  yearsExperience: number;
  maxOpenCases: number;
}

export const DEMO_MAKES = ["Veltra", "Korrin", "Astaro", "Meridane", "Tovak"] as const;

export const DEMO_SHOPS: DemoShop[] = [
  {
    key: "cinderwick",
    name: "Cinderwick Auto Works",
    owner: { key: "ravi", email: "owner@burnline.test", name: "Ravi Castellan", color: "#d4831f" },
    technicians: [
      { key: "dana", email: "tech@burnline.test", name: "Dana Whitlock", color: "#2f8f83" },
      { key: "theo", email: "theo.varga@cinderwick.test", name: "Theo Varga", color: "#3b7dd8" },
    ],
  },
  {
    key: "harrowvale",
    name: "Harrowvale Motor Bay",
    owner: { key: "priya", email: "priya.lund@harrowvale.test", name: "Priya Lund", color: "#b5485d" },
    technicians: [{ key: "marcus", email: "marcus.obi@harrowvale.test", name: "Marcus Obi", color: "#5a8f29" }],
  },
  {
    key: "lantern",
    name: "Quillby Lane Repairs",
    owner: { key: "hollis", email: "hollis.grey@quillbylane.test", name: "Hollis Grey", color: "#8a6d3b" },
    technicians: [{ key: "sunita", email: "sunita.rao@quillbylane.test", name: "Sunita Rao", color: "#c2562f" }],
  },
];

export const DEMO_EXPERTS: DemoExpert[] = [
  {
    key: "mira",
    email: "expert@burnline.test",
    name: "Mira Okonkwo-Hale",
    color: "#7a5cc2",
    status: "approved",
    systems: ["ignition", "sensors"],
    makes: ["Veltra", "Korrin", "Astaro"],
    bio: "Eighteen years on secondary ignition, coil-on-plug diagnosis and scope work for independent shops.",
    yearsExperience: 18,
    maxOpenCases: 4,
  },
  {
    key: "tomasz",
    email: "tomasz.ellery@experts.test",
    name: "Tomasz Ellery",
    color: "#1f8a5b",
    status: "approved",
    systems: ["fuel", "sensors"],
    makes: ["Meridane", "Tovak", "Veltra"],
    bio: "Fuel systems and injector diagnosis: current ramps, pintle timing, fuel trims.",
    yearsExperience: 14,
    maxOpenCases: 3,
  },
  {
    key: "ines",
    email: "ines.rautio@experts.test",
    name: "Ines Rautio",
    color: "#c0392b",
    status: "approved",
    systems: ["starting-charging", "engine-mechanical"],
    makes: [],
    bio: "Starting and charging, relative compression from starter current, no-start diagnosis on any make.",
    yearsExperience: 11,
    maxOpenCases: 3,
  },
  {
    key: "aurelio",
    email: "aurelio.banks@experts.test",
    name: "Aurelio Banks",
    color: "#2c6e91",
    status: "approved",
    systems: ["ignition", "engine-mechanical"],
    makes: ["Meridane", "Tovak", "Astaro"],
    bio: "Former fleet workshop lead; ignition and mechanical faults on high-mileage engines.",
    yearsExperience: 22,
    maxOpenCases: 3,
  },
  {
    key: "kwame",
    email: "kwame.ashdown@experts.test",
    name: "Kwame Ashdown",
    color: "#9b59b6",
    status: "pending",
    systems: ["sensors", "networks"],
    makes: ["Korrin", "Tovak"],
    bio: "Sensor and network diagnosis; applied to the desk last week.",
    yearsExperience: 7,
    maxOpenCases: 2,
  },
  {
    key: "lena",
    email: "lena.marchetti@experts.test",
    name: "Lena Marchetti",
    color: "#e67e22",
    status: "pending",
    systems: ["ignition", "fuel"],
    makes: ["Astaro", "Meridane"],
    bio: "Ignition and fuel on small turbo engines; waiting for the desk's review.",
    yearsExperience: 9,
    maxOpenCases: 3,
  },
];

export const DEMO_ADMIN: DemoPerson = {
  key: "admin",
  email: "admin@burnline.test",
  name: "Desk Admin",
  color: "#444444",
};
