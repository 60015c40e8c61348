/**
 * Word lists of the invented scenario: Harbourline Transit, a fictional regional transit agency.
 * Every name here is made up for Spillway's demo data; none refers to a real agency, place or person.
 */

export const AGENCY = 'Harbourline Transit';
export const HELP_HOST = 'help.harbourline.example';

export const LINES = [
  'Greyfell Line', 'Saltmarsh Line', 'Copperway', 'Lantern Loop', 'Estuary Express', 'Kestrel Line',
  'Route 4 Millrace', 'Route 7 Bluebell Shuttle', 'Route 12 Orchard Hill', 'Route 19 Dunmere',
  'Route 23 Quarry Lane', 'Route 31 Fennick', 'Night Owl N2', 'Night Owl N5', 'the Tidewater ferry',
  'the Otterbank tram',
] as const;

export const STATIONS = [
  'Saltmarsh Quay', 'Northgate', 'Copper Street', 'Harbour Central', 'Wrenfield', 'Otterbank',
  'Millbridge', 'Dunmere Park', 'Fennick Cross', 'Lanternhall', 'Brackwater', 'Orchard Hill',
  'Gullsmouth Pier', 'Tannery Row', 'Kestrel Heath', 'Ropewalk', 'Bell Foundry', 'Marram Dunes',
  'Sluicegate', 'Ashby Causeway', 'Pennycress', 'Westwharf', 'Cinder Lane', 'Heronsgate',
  'Quarry Lane', 'St Ebba Square', 'Lowtide', 'Chandlers Yard', 'Bluebell Meadow', 'Foxglove Road',
] as const;

export const PRODUCTS = [
  'Tidewater Pass', 'Day Rover', 'Harbour Saver 10', 'Concession Card', 'Night Owl Ticket',
  'Weekly Anchor', 'Student Compass Card', 'Family Daytripper', 'Bike Carriage Permit',
  'Ferry Plus add-on', 'Airport Link single', 'Off-Peak Return',
] as const;

export const ZONES = ['Zone A', 'Zone B', 'Zones A–B', 'Zones A–C', 'Zone C', 'all zones'] as const;
export const WEEKDAYS = ['Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday', 'Sunday'] as const;
export const MONTHS = [
  'January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October',
  'November', 'December',
] as const;
export const CHANNELS = ['the Harbourline app', 'a ticket machine', 'the travel centre at Harbour Central', 'the website', 'the driver'] as const;
export const ITEMS = [
  'a black umbrella', 'a blue rucksack', 'a set of house keys', 'a child’s scooter', 'a laptop bag',
  'a pair of reading glasses', 'a Concession Card', 'a green scarf', 'a phone with a cracked case', 'a violin case',
] as const;
export const FACILITIES = [
  'step-free access', 'the lift', 'the tactile paving', 'the hearing loop', 'the ramp at the front door',
  'the priority seating', 'the wheelchair space', 'the audio announcements', 'the accessible toilet',
] as const;
export const REASONS = [
  'track renewal', 'a signalling upgrade', 'the harbour festival', 'bridge inspection', 'resurfacing works',
  'platform extension works', 'a timetable change', 'flood defence works',
] as const;

export const TOPICS = [
  'fares', 'passes', 'concessions', 'accessibility', 'lost property', 'service changes', 'bikes',
  'refunds', 'night services', 'ferry',
] as const;
export type Topic = (typeof TOPICS)[number];

/** Sentence templates per topic; `{slot}` names are filled from the lists above. */
export const SENTENCES: Record<Topic, readonly string[]> = {
  fares: [
    'A single fare within {zone} costs £{price} when paid with {channel}.',
    'Fares are capped at £{price} per day for journeys in {zone}, so you never pay more than a {product}.',
    'Children under {small} travel free when accompanied by a fare-paying adult.',
    'Paying with a contactless card gives the same price as a {product} bought in advance.',
    'Cash fares on {line} are rounded up to the nearest ten pence.',
    'A change between {line} and {line2} within {count} minutes counts as one journey.',
    'Peak fares apply on weekdays before {time} and between 16:00 and 18:30.',
  ],
  passes: [
    'The {product} is valid for unlimited travel in {zone} for {count} days from first use.',
    'You can load a {product} onto your card at {channel}.',
    'A {product} bought on {weekday} starts on the day you first tap in, not the day you buy it.',
    'Lost passes can be replaced once per year for a £{price} fee if the card was registered.',
    'The {product} includes travel on {line} but not on {line2} after midnight.',
    'Monthly passes renew automatically on the {day} of each month unless you cancel them in your account.',
  ],
  concessions: [
    'The {product} gives half-price travel to riders aged {age} and over.',
    'Students need to renew the {product} every {month} with proof of enrolment.',
    'Companion travel is free for one adult travelling with a holder of a disability {product}.',
    'Concession fares are not valid on {line} before {time} on weekdays.',
    'Applications for a {product} take up to {count} working days to process.',
  ],
  accessibility: [
    'All stations on {line} have {facility} except {station}.',
    '{facility} at {station} is out of service until {weekday} {day} {month}.',
    'You can book travel assistance up to {count} hours before your journey through {channel}.',
    'Buses on {line} kneel at every stop and carry a ramp for wheelchair users.',
    'Assistance dogs travel free on all Harbourline services.',
    'The nearest step-free alternative to {station} is {station2}, {count} minutes away on {line}.',
  ],
  'lost property': [
    'Items found on {line} are taken to the lost property office at {station} within {count} days.',
    'The lost property office at {station} is open {weekday} to {weekday2}, 10:00 to {time}.',
    'Keep your journey details ready: the time, the line and the direction of travel help us match your item.',
    'Unclaimed items are kept for {count} days and then donated or recycled.',
    'There is a £{price} handling fee for items collected after the first week.',
    'Wallets, phones and keys are logged the same day they are found.',
  ],
  'service changes': [
    '{line} will not run between {station} and {station2} on {weekday} because of {reason}.',
    'Replacement buses will run every {count} minutes from outside {station}.',
    'From {day} {month} the first departure on {line} moves to {time}.',
    'Journeys on {line} may take up to {count} minutes longer during {reason}.',
    'Tickets for {line} are accepted on {line2} while the works last.',
  ],
  bikes: [
    'Folded bikes are allowed on all services at any time.',
    'Full-size bikes are allowed on {line} outside peak hours with a {product}.',
    'Cycle parking at {station} has {count} covered spaces.',
    'E-scooters are not allowed on any Harbourline vehicle or station.',
  ],
  refunds: [
    'If your service is delayed by more than {count} minutes you can claim {share} of the fare back.',
    'Unused days on a {product} can be refunded minus a £{price} admin fee.',
    'Claims must be made within {count} days of the journey through {channel}.',
    'Refunds are paid to the card used for the purchase within {small} working days.',
  ],
  'night services': [
    '{line} runs every {count} minutes between midnight and {time} on Fridays and Saturdays.',
    'Night fares are the same as daytime off-peak fares.',
    'The last departure from {station} on {line} is at {time}.',
    'A {product} covers night buses until {time} the next morning.',
  ],
  ferry: [
    'The Tidewater ferry sails from {station} every {count} minutes in summer.',
    'A {product} is valid on the ferry with the Ferry Plus add-on.',
    'Sailings are cancelled when wind speeds exceed {count} knots; check the app before you travel.',
    'Bikes travel free on the ferry outside peak hours.',
  ],
};

/** Simple rewordings used to make near-duplicate copies of an article (a mirror site reworded the text). */
export const REWORDINGS: ReadonlyArray<readonly [RegExp, string]> = [
  [/\bcosts\b/g, 'is'],
  [/\bYou can\b/g, 'Riders can'],
  [/\bare allowed\b/g, 'are permitted'],
  [/\bwithin\b/g, 'inside'],
  [/\bup to\b/g, 'a maximum of'],
  [/\bbetween\b/g, 'from'],
  [/\bunless\b/g, 'except when'],
];

export const USER_OPENERS = [
  'Hi,', 'Hello,', 'Quick question:', 'Hi there,', 'Morning,', 'Sorry to bother you,', '', '', '',
] as const;

/** Query templates per topic. */
export const QUESTIONS: Record<Topic, readonly string[]> = {
  fares: [
    'how much is a single from {station} to {station2} on {weekday}?',
    'is there a daily cap if I travel in {zone}?',
    'do I pay peak fare if I tap in at {time}?',
    'is it cheaper to buy a {product} or pay contactless?',
  ],
  passes: [
    'when does my {product} start if I buy it on {weekday}?',
    'does the {product} cover {line}?',
    'I lost my card with a {product} on it, can it be replaced?',
  ],
  concessions: ['am I eligible for the {product} at {age}?', 'how long does a {product} application take?'],
  accessibility: [
    'is there {facility} at {station}?',
    'can I book assistance for {weekday} morning at {station}?',
    'which stations on {line} are step-free?',
  ],
  'lost property': [
    'I left {item} on {line} around {time} yesterday, where do I look?',
    'when is the lost property office at {station} open?',
  ],
  'service changes': [
    'is {line} running on {weekday}?',
    'how do I get from {station} to {station2} during the works?',
  ],
  bikes: ['can I take my bike on {line} at {time}?', 'is there cycle parking at {station}?'],
  refunds: ['my train was {count} minutes late, can I claim?', 'can I get money back on my {product}?'],
  'night services': ['what is the last {line} from {station}?', 'does my {product} work on night buses?'],
  ferry: ['is the ferry from {station} running today?', 'can I use my {product} on the ferry?'],
};

/** Reply sentences with no support in any article (the generator mixes a few in, as hallucination candidates). */
export const UNSUPPORTED_CLAIMS = [
  'You can also pay with cash on the Tidewater ferry at the gangway.',
  'Riders over 60 travel free on weekends on every line.',
  'The lost property office will post items to you free of charge.',
  'All night buses have on-board wifi and charging points.',
  'Refunds are paid in cash at any station within one hour.',
  'Dogs of any size travel free in the front carriage.',
] as const;
