/**
 * Everything the Mossbank Commons generator writes with: the invented
 * neighbourhood (people, streets, shops, clubs, events, bands) and the post
 * templates of each category. Every name here is made up for the demo.
 *
 * Templates use `{slot}` placeholders filled from {@link SLOTS}. A template
 * that marks a hard case says which: the cases a keyword list gets wrong.
 */

export const MOSSBANK_CATEGORIES = ['threat', 'harassment', 'ok'] as const;
export type MossbankCategory = (typeof MOSSBANK_CATEGORIES)[number];

/**
 * The hard cases of the scenario:
 * - `harmless-violent-words`: ok posts with violent words used harmlessly ("killed it", "could murder a coffee");
 * - `heated-harmless`: ok posts that are angry but harmless (parking, bins, hedges);
 * - `veiled-threat`: threats with no violent word ("I know which house is yours");
 * - `insult-free-harassment`: abuse aimed at a person without a single insult word.
 */
export const HARD_CASES = [
  'harmless-violent-words',
  'heated-harmless',
  'veiled-threat',
  'insult-free-harassment',
] as const;
export type HardCase = (typeof HARD_CASES)[number];

export interface PostTemplate {
  /** The board it is posted on (the item's source is `board/<board>`). */
  board: string;
  text: string;
}

/** A group of templates drawn with a weight within its category. */
export interface TemplateGroup {
  category: MossbankCategory;
  hardCase: HardCase | null;
  /** Relative weight within the category. */
  weight: number;
  templates: readonly PostTemplate[];
}

export const SLOTS: Readonly<Record<string, readonly string[]>> = {
  name: [
    'Tamsin',
    'Orrin',
    'Bryony',
    'Caspar',
    'Delphine',
    'Ewan',
    'Fenella',
    'Gideon',
    'Hollis',
    'Imogen',
    'Jory',
    'Kestrel',
    'Lowen',
    'Merryn',
    'Nessa',
    'Ottilie',
    'Perrin',
    'Quilla',
    'Rafferty',
    'Saffi',
    'Tobiah',
    'Ulla',
    'Verity',
    'Wilf',
    'Yarrow',
    'Zennor',
    'Anselm',
    'Briar',
    'Corin',
    'Dashiell',
    'Elowen',
    'Fitz',
    'Greer',
    'Hebe',
    'Ivo',
    'Juno',
    'Linnet',
    'Morwenna',
    'Nye',
    'Oriel',
  ],
  user: [
    'mossyboots',
    'kettle_queen',
    'lanternfan77',
    'binwatcher',
    'fennick_fox',
    'quillby_dad',
    'allotment_al',
    'drizzle_mum',
    'pavement_patrol',
    'tannery_tom',
    'sorrel_sue',
    'gannet_gran',
    'nettlebed_ned',
    'hobnail_hal',
    'otterford_olly',
    'the_real_wren',
    'larkspur_lou',
    'cinderpath_kid',
    'bellweather_bea',
    'pike_yard_pete',
  ],
  street: [
    'Larkspur Row',
    'Fennick Lane',
    'Old Tannery Walk',
    'Quillby Street',
    'Hobbard Close',
    'Mossbank Parade',
    'Cinder Path',
    'Bellweather Road',
    'Nettlebed Gardens',
    'Otterford Way',
    'Saltings Lane',
    "Pike's Yard",
    'Juniper Terrace',
    "Drovers' Mews",
    'Ferncombe Rise',
    'Sorrel Street',
    "Tinker's Hill",
    'Gannet Crescent',
  ],
  shop: [
    "Brindle's bakery",
    'the Copper Kettle café',
    'Pennywhistle Hardware',
    'Greenmantle grocers',
    'Tallow & Wick',
    'Mossbank Cycles',
    'Hobnail Books',
    'the Lantern chippy',
    'Fennick Launderette',
    'the corner shop on Sorrel Street',
    'Marrowby Pharmacy',
    'the Thimble sewing shop',
  ],
  venue: [
    "the Wren's Rest",
    'the cricket pavilion',
    "St Orrick's hall",
    'the Mossbank Institute',
    'the bandstand',
    'the community hall',
    'the Otterford Arms',
    'the old chapel on Cinder Path',
  ],
  club: [
    'the Allotment Society',
    'the Tuesday Knitting Circle',
    'Fennick Lane Runners',
    'the Mossbank Chess Club',
    'the Litter Pickers',
    'the Quillby Street Choir',
    'the Model Railway Group',
    'the Saturday Swim Club',
    'the Residents Association',
    'the Book Swap group',
  ],
  event: [
    'the spring fête',
    'the bake sale',
    'the lantern walk',
    'quiz night',
    'the street party',
    'the jumble sale',
    'the dog show',
    'carol singing',
    'open gardens day',
    'the scarecrow trail',
    'the duck race',
    'the plant swap',
  ],
  band: [
    'The Damp Cardigans',
    'Velvet Hedgehog',
    'Static Moth',
    'The Lamplighters',
    'Borrowed Kettles',
    'Gravel Choir',
    'The Nettle Kings',
    'Paper Otters',
    'Minor Drizzle',
    'The Lost Wellies',
  ],
  thing: ['hedge', 'extension', 'fence', 'van', 'shed', 'wind chimes', 'garden gnome', 'conservatory', 'trampoline'],
  crop: ['marrow', 'courgettes', 'tomatoes', 'runner beans', 'squash', 'sunflowers', 'leeks', 'strawberries'],
  bake: [
    'lemon drizzle',
    'coffee and walnut sponge',
    'flapjack',
    'carrot cake',
    'scones',
    'ginger loaf',
    'cheese straws',
  ],
  pet: ['dog', 'spaniel', 'terrier', 'greyhound', 'labrador', 'whippet'],
  day: ['Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday', 'Sunday'],
  time: ['half seven', 'eight', 'six in the morning', 'quarter past nine', 'ten at night', 'lunchtime', 'half three'],
  item: [
    'kids bike',
    'pram',
    'sofa',
    'lawnmower',
    'bookcase',
    'box of records',
    'kettle',
    'paddling pool',
    'camping stove',
    'sewing machine',
  ],
  price: ['£5', '£10', '£15', '£20', '£25', '£40', 'a tenner', 'free to a good home'],
  colour: ['blue', 'red', 'green', 'silver', 'white', 'yellow', 'black'],
};

const t = (board: string, text: string): PostTemplate => ({ board, text });

export const TEMPLATE_GROUPS: readonly TemplateGroup[] = [
  {
    category: 'ok',
    hardCase: null,
    weight: 62,
    templates: [
      t(
        'lost-and-found',
        'Found a set of keys on {street} this morning, blue lanyard. Message me and describe the keyring.',
      ),
      t('lost-and-found', 'Has anyone seen a grey {pet} near {street}? Answers to {name}, very friendly, a bit daft.'),
      t('lost-and-found', "Lost: one child's glove, {colour}, somewhere between {shop} and {venue}."),
      t('lost-and-found', 'Someone left a {colour} umbrella at {venue} after {event}, it is behind the bar.'),
      t('events', 'Reminder that {event} is this {day} at {venue}, doors at {time}. Bring a plate if you can!'),
      t('events', '{club} is looking for two more volunteers for {event}. No experience needed, just enthusiasm.'),
      t('events', 'Photos from {event} are up on the noticeboard at {shop}. Thanks {name} for taking them.'),
      t('events', 'Does anyone know if {event} is still on if it rains? Asking for {club}.'),
      t('events', '{band} are playing {venue} on {day}. Tickets from {shop}, {price}.'),
      t('for-sale', 'For sale: {item}, good condition, {price}. Collection from {street}.'),
      t('for-sale', 'Giving away a {item}, {price}. Needs a bit of love. Near {shop}.'),
      t('for-sale', 'Wanted: a {item} for my nephew, happy to pay {price}. Anyone on {street}?'),
      t('general', 'Shout out to {name} at {shop} who helped me carry my shopping home. Lovely person.'),
      t('general', 'Can anyone recommend a plumber who covers {street}? Ours has retired.'),
      t('general', 'Is {shop} open on {day}? Their sign says one thing and the website another.'),
      t('general', 'Welcome to the new family at the end of {street}! {name} says hello.'),
      t('general', 'Roadworks on {street} from {day}, according to the letter. Buses diverted via {street}.'),
      t('general', 'The streetlight outside number 12 on {street} has been flickering for a week. Reported it.'),
      t('general', 'Anyone else hear the owls on {street} last night? Beautiful.'),
      t('general', 'Big thanks to {club} for clearing the path along {street}. It looks brilliant.'),
      t('allotments', 'Spare {crop} seedlings if anyone wants them, leave a note at plot 14.'),
      t('allotments', '{club} meeting moved to {day} at {time}, same place as usual ({venue}).'),
      t('allotments', 'My {crop} won second prize at {event}! {name} was robbed, hers was better.'),
      t('allotments', 'Who is in charge of the water butts by the gate? One is leaking onto {street}.'),
      t('music', 'Anyone want to start a band? I play bass badly. Practice at {venue} maybe?'),
      t('music', 'Setlist from {band} at {venue} in case anyone asked, {name} has a copy.'),
      t('general', '{name} and I are doing a sponsored walk for {club}, route along {street}. Any pennies welcome.'),
      t('general', 'Parcel for number 7 {street} got left with me, come and grab it after {time}.'),
      t('general', 'Recipe for the {bake} from {event}, as promised: flour, sugar, patience.'),
      t('general', 'Quick poll: should {event} move to {venue} next year? It was packed.'),
    ],
  },
  {
    category: 'ok',
    hardCase: 'heated-harmless',
    weight: 18,
    templates: [
      t(
        'parking',
        'For the LAST time, whoever keeps parking across the dropped kerb on {street}: it is not your personal car park.',
      ),
      t(
        'parking',
        'The {colour} van on {street} has been parked on the pavement for nine days. Nine! Prams cannot get past.',
      ),
      t(
        'parking',
        'People who park outside {shop} with their engines running are the reason we cannot have nice things.',
      ),
      t('parking', 'I am sick to death of the parking on {street}. Two hours to find a space on {day}. Ridiculous.'),
      t('parking', 'Whoever blocked my drive on {street} at {time}: I was late for work and I am furious.'),
      t(
        'bins',
        'The bins on {street} have not been collected for three weeks and the council just shrugs. Absolutely livid.',
      ),
      t('bins', 'Whoever keeps putting their recycling in my bin on {street}, please stop. Third time this month.'),
      t('bins', 'Foxes have had the bins open on {street} again and nobody ever picks it up. Disgraceful.'),
      t(
        'bins',
        'Is it really so hard to take your bins back in after collection, {street}? They have been out since {day}.',
      ),
      t(
        'general',
        'The hedge on the corner of {street} is so overgrown you cannot see the traffic. Cut it back, {name}, honestly.',
      ),
      t('general', 'I am done arguing with {club} about the noticeboard. Do what you like, I give up.'),
      t(
        'parking',
        '{name} you are completely wrong about the parking permits and I will keep saying so at the residents meeting.',
      ),
      t('general', 'Fireworks on {street} at {time} on a {day}. Some of us have work. Have some consideration.'),
    ],
  },
  {
    category: 'ok',
    hardCase: 'harmless-violent-words',
    weight: 14,
    templates: [
      t('music', '{band} absolutely killed it at {venue} last night. Best gig on the estate in years.'),
      t('general', 'I could murder a coffee. Is {shop} open yet?'),
      t('events', "The bake sale slayed. {name}'s {bake} was to die for."),
      t('allotments', 'The slugs destroyed my {crop} again. War has been declared, {street} allotments.'),
      t('events', 'We knocked them dead at {event}, {club} came first! Hats off to {name}.'),
      t('general', 'That hill on {street} is a killer, my legs are shot after the {club} run.'),
      t('events', '{name} smashed it with the raffle at {event}, we raised loads.'),
      t('music', 'The drummer from {band} was on fire at {venue}, absolutely murdered that solo.'),
      t('general', 'If the queue at {shop} gets any longer I am going to die of boredom.'),
      t('events', 'Quiz night at {venue}: we got absolutely destroyed by {club} on the music round.'),
      t('general', 'My {pet} would kill for one of the sausage rolls from {shop}.'),
      t('music', '{band} blew the roof off {venue}. My ears are still ringing.'),
    ],
  },
  {
    category: 'ok',
    hardCase: null,
    weight: 6,
    templates: [
      t('general', "Quelqu'un a vu un chat gris près de {street} ? Il s'appelle {name}."),
      t('events', 'Hat jemand am Samstag Zeit für {event}? Wir treffen uns vor {venue}.'),
      t('general', '¿Alguien sabe a qué hora abre {shop} mañana? Gracias 🙂'),
      t('lost-and-found', 'Czy ktoś znalazł klucze przy {street}? Niebieski brelok, pytać {name}.'),
      t('events', 'Ψάχνω παρέα για {event} στο {venue}. Ποιος έρχεται;'),
      t('for-sale', 'Vendo {item} quasi nuova, {price}, ritiro in {street}.'),
      t('general', 'Dank aan {name} voor de hulp met de boodschappen bij {shop}!'),
      t('music', '{band} の演奏、{venue} で最高だった！'),
    ],
  },
  {
    category: 'threat',
    hardCase: null,
    weight: 55,
    templates: [
      t('parking', '{name}, park across my drive one more time and you will get hurt. I mean it.'),
      t('parking', 'If I see you near my car on {street} again I will break your windows and then your face, {name}.'),
      t('general', 'I am going to hurt you, {name}. Watch your back when you leave {shop}.'),
      t('events', '{name} you are going to regret this. I will be waiting outside {venue} after {event}.'),
      t('bins', 'Touch my bins again and I will put you in one, {name}. That is a promise, not a joke.'),
      t('general', 'Someone needs to shut {name} up for good and I am happy to do it myself on {day}.'),
      t('general', '@{user} I will find you and make you pay for what you said about my kids.'),
      t('parking', 'Next time you key my car on {street} I will come round to yours with a hammer, {name}.'),
      t('general', '{name}, you and that {pet} had better stay off {street}. I will hurt you both.'),
      t('events', 'Show your face at {event} and you will leave in an ambulance, {name}.'),
      t('general', 'I know where you live on {street}, {name}, and I am coming for you tonight.'),
    ],
  },
  {
    category: 'threat',
    hardCase: 'veiled-threat',
    weight: 40,
    templates: [
      t('general', 'I know which house is yours on {street}, {name}, and I know when you walk the {pet}.'),
      t('general', 'You will not be posting much longer, {name}.'),
      t(
        'parking',
        'Nice {colour} car you have got on {street}, {name}. Would be a shame if something happened to it. Or to you.',
      ),
      t('general', 'I have been watching you leave {shop} every {day} at {time}. You should be more careful, {name}.'),
      t('events', 'Enjoy {event} while you can, {name}. It will be your last one.'),
      t('general', 'Your kids walk past {street} at {time}, do they not, {name}.'),
      t('general', 'Keep it up, @{user}. I know where you park and I know when you are alone.'),
      t('general', '{name}, I would not go out after dark on {street} for a while if I were you.'),
      t('general', 'Funny how your lights on {street} go off at {time} every night, {name}. See you soon.'),
      t('general', 'Say that again, @{user}. I know your front door on {street} and I have all the time in the world.'),
      t('events', 'People like you have accidents, {name}. Think about that before {event}.'),
    ],
  },
  {
    category: 'threat',
    hardCase: null,
    weight: 5,
    templates: [
      t('general', 'Ich weiß, wo dein Auto auf der {street} steht, {name}. Pass gut auf dich auf.'),
      t('general', '{name}, sé a qué hora sales de {shop}. No te va a gustar lo que viene.'),
    ],
  },
  {
    category: 'harassment',
    hardCase: null,
    weight: 60,
    templates: [
      t('general', '{name} is the most pathetic person on this board. Nobody wants you here.'),
      t('general', 'Shut up, {name}. Every single post you make is stupid.'),
      t('general', '@{user} you absolute clown, crawl back under whatever rock you came from.'),
      t('general', '{name}, you are a useless waste of space and your {thing} is embarrassing.'),
      t('events', 'Nobody at {event} could stand you, {name}. You ruin everything you touch, you idiot.'),
      t('parking', '{name} parks like a moron and posts like one too. Get off this forum.'),
      t('general', 'Look at @{user} whining again. What a loser. Go cry somewhere else.'),
      t('general', '{name} you are ugly inside and out and everyone on {street} knows it.'),
      t('allotments', 'The {club} would be fine if {name} stopped showing up. Worthless, lazy and rude.'),
      t('music', '{name} cannot sing, cannot play, and cannot take a hint. Pathetic.'),
      t('general', 'Imagine being {name}. Thick as a brick and twice as boring.'),
      t('events', '@{user} is a spineless liar and a bore. Blocked, and good riddance.'),
    ],
  },
  {
    category: 'harassment',
    hardCase: 'insult-free-harassment',
    weight: 35,
    templates: [
      t(
        'general',
        'Reminder that {name} still has not paid anyone back from {event}. I will post this every day until she leaves {street}.',
      ),
      t('general', 'Oh look, {name} has an opinion again. Has anyone ever asked for one? Ever?'),
      t('general', "Screenshotting all of @{user}'s posts for the group chat so we can all have a laugh at them."),
      t('general', 'Nobody at {club} wanted you there, {name}. We only put up with you because we felt sorry for you.'),
      t('general', 'Everyone, this is the {name} who lives at the end of {street}. Now you know who to avoid.'),
      t('events', 'Please do not invite {name} to {event}. Trust me, ask anyone at {club} why.'),
      t('general', '@{user} every thread you post in goes quiet. Take the hint and stop posting.'),
      t('general', "Started a thread just to collect {name}'s worst posts. Add yours below, the more the better."),
      t('general', '{name}, I have told your boss at {shop} what you write on here. Let us see how long you last.'),
      t('general', 'Does {name} know that the whole of {club} mutes her? Someone should tell her. Actually, let me.'),
    ],
  },
  {
    category: 'harassment',
    hardCase: null,
    weight: 5,
    templates: [
      t('general', 'Du hast keine Ahnung, {name}. Halt einfach den Mund, niemand will dich hier.'),
      t('general', '{name}, tu es vraiment pathétique. Personne ne veut de toi dans {club}.'),
    ],
  },
];

/** Sentences that can go before or after any post without changing what it is. */
export const NEUTRAL_SENTENCES: readonly string[] = [
  'Sorry for the long post.',
  'Posting here because the group chat is useless.',
  'Mods, please do not delete this.',
  '(edited for typos)',
  'Been meaning to say this for weeks.',
  'Third time posting about it.',
  'Anyway.',
  'Just saying.',
  'Posted from my phone on {street}, sorry for any typos.',
  'Not sure this is the right board.',
  'Same as last {day}, really.',
  'Written at {time}, so forgive me.',
];

export const PREFIXES: readonly string[] = [
  'PSA: ',
  'Update: ',
  'Honestly, ',
  'ngl ',
  'Right, ',
  'Ok so ',
  'Quick one: ',
  'Again: ',
];

export const EMOJI: Readonly<Record<MossbankCategory, readonly string[]>> = {
  ok: ['🙂', '😂', '🎸', '🍰', '🚗', '🗑️', '🐕', '☕', '🌱', '👍', '😡', '🙄'],
  harassment: ['🙄', '😂', '🤡', '👋', '💅'],
  threat: ['👀', '🙂', '⏳', '🚪'],
};

/**
 * Seed terms of the demo desk: mostly helpful, deliberately imperfect.
 * "killed" and "destroyed" fire on harmless posts ("killed it at the bandstand");
 * "know where you" misses the veiled threats that do not say it; "pathetic" and
 * "clown" miss the harassment without insults.
 */
export const MOSSBANK_SEED_TERMS: Readonly<Record<MossbankCategory, readonly string[]>> = {
  threat: ['hurt you', 'watch your back', 'regret this', 'know where you', 'killed', 'destroyed'],
  harassment: ['pathetic', 'shut up', 'clown', 'nobody wants you', 'useless', 'loser'],
  ok: ['lost', 'for sale', 'bake sale', 'recommend', 'thanks'],
};
