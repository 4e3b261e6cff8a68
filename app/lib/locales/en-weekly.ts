// Strings of the weekly records e-mail (the e-mail, its list on the alerts screen, its settings); spread into en.ts.
export const weeklyEn = {
  weeklyMail: {
    subject: "Cooling records of {{site}}, {{from}} to {{to}}",
    exporter: "weekly e-mail",
    intro: "The cooling records of {{site}} for last week, {{from}} to {{to}} ({{week}}; batches started in these days, site time {{zone}}).",
    counts: "{{batches}} batches; {{flagged}} flagged (a stage missed, a discard, a corrective action or a late entry); {{unverified}} ended and not yet verified.",
    attached: "The workbook is attached ({{file}}): a cover, the batches, readings and corrective actions, and the cooling curves.",
    tooLarge: "The workbook is {{size}} MB, more than the {{limit}} MB that can be attached safely, so it is not attached: download it from the link below (sign-in needed).",
    retention: "Keep these records for at least {{days}} days (the site's retention setting).",
    openExport: "Download this workbook again",
    download: "Download the workbook",
  },
  weeklyRecords: {
    alertsHelp: "Last week's records (Monday to Sunday) with the workbook attached, once a week at the time set in the site settings. Everyone on the list gets it; with no list, the site's QA people do.",
    settingsTitle: "Weekly records e-mail",
    weekday: "Send it on",
    hour: "At (hour, site time, 0–23)",
    weekdays: { "1": "Monday", "2": "Tuesday", "3": "Wednesday", "4": "Thursday", "5": "Friday", "6": "Saturday", "7": "Sunday" },
    badWeekday: "Choose a day of the week.",
    badHour: "Give a whole hour from 0 to 23.",
    help: "Last week's workbook goes to the people on the weekly records list (Alerts screen); with no list, to the site's QA people.",
  },
};
