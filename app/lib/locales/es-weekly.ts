// Strings of the weekly records e-mail; spread into es.ts.
import type { weeklyEn } from "./en-weekly";

export const weeklyEs: typeof weeklyEn = {
  weeklyMail: {
    subject: "Registros de enfriamiento de {{site}}, del {{from}} al {{to}}",
    exporter: "correo semanal",
    intro: "Los registros de enfriamiento de {{site}} de la semana pasada, del {{from}} al {{to}} ({{week}}; lotes iniciados en esos días, hora del sitio {{zone}}).",
    counts: "{{batches}} lotes; {{flagged}} señalados (una etapa incumplida, un descarte, una acción correctiva o una entrada tardía); {{unverified}} terminados y aún sin verificar.",
    attached: "El libro va adjunto ({{file}}): una portada, los lotes, las lecturas y las acciones correctivas, y las curvas de enfriamiento.",
    tooLarge: "El libro ocupa {{size}} MB, más de los {{limit}} MB que se pueden adjuntar con seguridad, así que no va adjunto: descárguelo con el enlace de abajo (hace falta iniciar sesión).",
    retention: "Conserve estos registros al menos {{days}} días (la conservación configurada en el sitio).",
    openExport: "Descargar de nuevo este libro",
    download: "Descargar el libro",
  },
  weeklyRecords: {
    alertsHelp: "Los registros de la semana pasada (de lunes a domingo) con el libro adjunto, una vez por semana a la hora fijada en la configuración del sitio. Lo recibe todo el que está en la lista; sin lista, el personal de calidad del sitio.",
    settingsTitle: "Correo semanal de registros",
    weekday: "Enviarlo el",
    hour: "A las (hora del sitio, 0–23)",
    weekdays: { "1": "lunes", "2": "martes", "3": "miércoles", "4": "jueves", "5": "viernes", "6": "sábado", "7": "domingo" },
    badWeekday: "Elija un día de la semana.",
    badHour: "Indique una hora entera de 0 a 23.",
    help: "El libro de la semana pasada va a las personas de la lista del correo semanal (pantalla Alertas); sin lista, al personal de calidad del sitio.",
  },
};
