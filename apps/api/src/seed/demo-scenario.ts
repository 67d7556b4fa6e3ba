/**
 * The invented demo scenario. Every name, site and number here is made up for the demo.
 *
 * KESTREL: a blinded two-arm randomized trial of a home-based breathing-and-walking
 * programme versus usual care in adults with chronic lung disease, at six hospitals.
 * HEARTHSTONE: an observational cohort at four clinics comparing adults who started a
 * lipid-lowering medicine with those who did not.
 */
export const demoUsers = [
  { email: 'admin@counterpoise.example', displayName: 'Ada Okonkwo', isAdmin: true, role: null },
  { email: 'coordinator@counterpoise.example', displayName: 'Tomasz Wren', isAdmin: false, role: 'coordinator' },
  { email: 'statistician@counterpoise.example', displayName: 'Priya Halvorsen', isAdmin: false, role: 'statistician' },
  { email: 'sponsor@counterpoise.example', displayName: 'Marguerite Solano', isAdmin: false, role: 'sponsor' },
  { email: 'auditor@counterpoise.example', displayName: 'Jun Castellane', isAdmin: false, role: 'auditor' },
] as const;

export const trialSites = [
  { code: 'ALB', name: 'Alder Bay Hospital', enrollmentTarget: 80 },
  { code: 'KHM', name: 'Kestrel Hill Medical Centre', enrollmentTarget: 80 },
  { code: 'MPC', name: 'Marrow Point Clinic', enrollmentTarget: 60 },
  { code: 'SRH', name: 'Sable Ridge Hospital', enrollmentTarget: 70 },
  { code: 'TVH', name: 'Tamsin Valley Health', enrollmentTarget: 60 },
  { code: 'WFI', name: 'Wrenfield Infirmary', enrollmentTarget: 50 },
];

export const cohortSites = [
  { code: 'BRK', name: 'Brookmere Family Clinic', enrollmentTarget: 150 },
  { code: 'CLV', name: 'Clovelly Street Practice', enrollmentTarget: 150 },
  { code: 'DNH', name: 'Dunhallow Health Centre', enrollmentTarget: 120 },
  { code: 'ESK', name: 'Eskmoor Community Clinic', enrollmentTarget: 120 },
];

/** The coordinator of the demo works at two of the trial's hospitals and one cohort clinic. */
export const coordinatorSites = { trial: ['ALB', 'SRH'], cohort: ['BRK'] };
